import { describe, expect, it } from 'vitest'
import { arr, formula, num, pick, rel, run } from './helpers'

describe('formula language: units are constants', () => {
  it('850*nm shown in nm is 850, and in m is its SI value', () => {
    expect(num('850*nm', 'nm')).toBe(850)
    expect(num('850*nm', 'm')).toBeCloseTo(8.5e-7, 20)
  })

  it('1.48*eV without a display unit is shown in SI joules, with unit J and dimension energy', () => {
    const r = formula('1.48*eV')
    expect(r.value).toBe(1.48 * 1.602176634e-19)
    expect(r.unit).toBe('J')
    expect(r.dimension).toBe('energy')
  })

  it('3e4/cm shown in 1/cm is 3e4 and in cm^-1 the same', () => {
    expect(num('3e4/cm', '1/cm')).toBeCloseTo(3e4, 9)
    expect(num('3e4/cm', 'cm^-1')).toBeCloseTo(3e4, 9)
  })

  it('a dimensionless ratio shown in % is multiplied by 100', () => {
    expect(num('0.25', '%')).toBe(25)
  })
})

describe('formula language: names', () => {
  // CODATA 2018 (Tiesinga et al., Rev. Mod. Phys. 93, 025010 (2021)); h, c, e, k exact since the 2019 SI
  it('h, hbar, c0, q, kB, eps0 and me are the CODATA 2018 values in SI', () => {
    expect(num('h')).toBe(6.62607015e-34)
    expect(num('hbar')).toBe(6.62607015e-34 / (2 * Math.PI))
    expect(num('c0')).toBe(299792458)
    expect(num('q')).toBe(1.602176634e-19)
    expect(num('kB')).toBe(1.380649e-23)
    expect(num('eps0')).toBe(8.8541878128e-12)
    expect(num('me')).toBe(9.1093837015e-31)
  })

  it('pi and euler are π and e; E is not a built-in name', () => {
    expect(num('pi')).toBe(Math.PI)
    expect(num('euler')).toBe(Math.E)
    const r = formula('2*E')
    expect(r.status).toBe('error')
    expect(r.error).toBe('unknown name: E; check the spelling, or add a cell named E')
  })

  // hc/e = 1239.841984… eV·nm follows exactly from the defined h, c and e (CODATA 2018)
  it('h*c0/q/nm gives hc/e = 1239.841984 eV·nm', () => {
    expect(rel(num('h*c0/q/nm'), 1239.841984332)).toBeLessThan(1e-12)
  })

  it('a cell named E is usable in formulas', () => {
    expect(num('E/eV', undefined, [{ kind: 'parameter', name: 'E', value: 2, unit: 'eV' }])).toBe(2)
  })

  it('a cell named like a unit or constant shadows it and says so in a warning', () => {
    const res = run([
      { kind: 'parameter', name: 'h', value: 3 },
      { kind: 'parameter', name: 'nm', value: 7 },
      { kind: 'formula', name: 'out', source: 'h * nm' },
    ])
    expect(pick(res, 'out').value).toBe(21)
    expect(pick(res, 'h').warnings?.join(' ')).toMatch(/shadows the built-in constant h/)
    expect(pick(res, 'nm').warnings?.join(' ')).toMatch(/shadows the unit nm/)
    expect(pick(res, 'out').warnings).toEqual([])
  })

  it('an unknown name that differs from a unit or cell name only in case suggests it; single letters do not', () => {
    expect(formula('2*ev').error).toBe('unknown name: ev; did you mean eV? Names are case-sensitive')
    expect(formula('alpha*ev', undefined, [{ kind: 'parameter', name: 'Alpha', value: 1 }]).error)
      .toBe('unknown names: alpha, ev; did you mean Alpha (for alpha), eV (for ev)? Names are case-sensitive')
    expect(formula('2*a').error).toBe('unknown name: a; check the spelling, or add a cell named a')
  })

  it('an unknown name is an error naming every unknown name', () => {
    expect(formula('foo + bar*2').error).toBe('unknown names: foo, bar; check the spelling, or add cells with these names')
  })
})

describe('formula language: whole arrays', () => {
  it('arithmetic broadcasts scalars over arrays element by element', () => {
    expect(arr('grid(0, 1, 5)*2 + 1')).toEqual([1, 1.5, 2, 2.5, 3])
    expect(arr('[1, 2, 3] * [4, 5, 6] - 1')).toEqual([3, 9, 17])
    expect(arr('2 ^ [1, 2, 3]')).toEqual([2, 4, 8])
    expect(arr('-[1, 2]')).toEqual([-1, -2])
  })

  it('arrays of different lengths cannot be combined, and the error says which lengths', () => {
    expect(formula('[1, 2] + [1, 2, 3]').error).toMatch(/different lengths \(2 and 3\)/)
  })

  it('comparisons and logic give 1 and 0 element-wise', () => {
    expect(arr('[1, 2, 3] > 1')).toEqual([0, 1, 1])
    expect(arr('[1, 2, 3] >= 2 and [1, 2, 3] < 3')).toEqual([0, 1, 0])
    expect(arr('[0, 1] or [0, 0]')).toEqual([0, 1])
    expect(arr('not [0, 5]')).toEqual([1, 0])
    expect(num('2 == 2')).toBe(1)
    expect(num('2 != 2')).toBe(0)
  })

  it('a ? b : c chooses element-wise with an array test', () => {
    expect(arr('[1, 0, 1] ? 10 : [7, 8, 9]')).toEqual([10, 8, 10])
  })

  it('a ? b : c with a single-number test evaluates only the branch it takes', () => {
    // the other branch would exceed the element limit if it were evaluated
    expect(num('1 > 0 ? 5 : sum(grid(0, 1, 5000000))')).toBe(5)
  })

  it('a formula giving NaN values says how many in a warning', () => {
    const r = formula('sqrt([-1, 4, -9])')
    expect(r.status).toBe('ok')
    expect(r.warnings).toEqual([
      '2 of 3 values are not finite numbers (NaN or infinite); look for a division by zero, or a logarithm or square root of a value outside its range',
    ])
  })
})

describe('formula language: dimension checking', () => {
  it('adding an energy to a length is a warning naming both dimensions', () => {
    const r = formula('1*eV + 2*nm')
    expect(r.status).toBe('ok')
    expect(r.warnings).toEqual([
      '"1*eV + 2*nm" adds length (nm) to energy (eV): both sides of "+" need the same dimension (photon_energy(lambda) and photon_wavelength(E) convert between the two)',
    ])
  })

  it('showing an energy in nm is a warning naming both dimensions, and the value is shown in SI', () => {
    const r = formula('photon_energy(500*nm)', 'nm')
    expect(r.warnings).toEqual(['the display unit nm is for a length, but the value is an energy: it is shown in SI units (J); choose a unit for an energy, such as eV'])
    expect(r.unit).toBe('J')
    // hc/λ at 500 nm = 3.97289e-19 J (from the exact h, c)
    expect(rel(r.value as number, (6.62607015e-34 * 299792458) / 500e-9)).toBeLessThan(1e-14)
  })

  it('a function argument of the wrong dimension is a warning naming the argument', () => {
    expect(formula('photon_energy(2*eV)').warnings).toEqual(['photon_energy: lambda should be a length (nm), not an energy (eV); photon_wavelength(E) gives the wavelength of a photon energy'])
  })

  it('exp of a length is a warning; exp of a ratio of lengths is not', () => {
    expect(formula('exp(3*nm)').warnings).toEqual(['exp: x should be a dimensionless number, not a length (nm)'])
    expect(formula('exp(-(3*nm)/(5*nm))').warnings).toEqual([])
  })

  it('powers with constant exponents carry dimensions: (2*nm)^2 is an area, sqrt of an area a length', () => {
    expect(formula('(2*nm)^2').dimension).toBe('area')
    expect(formula('sqrt(4*cm^2)', 'cm').value).toBeCloseTo(2, 12)
    expect(formula('(1*eV)^-1').dimension).toBe('1/energy')
  })

  it('a dimensioned base raised to a non-constant power is a warning, the dimension unknown', () => {
    const r = formula('nm ^ x', undefined, [{ kind: 'parameter', name: 'x', value: 2 }])
    expect(r.warnings).toEqual(["\"nm^x\" raises a length (nm) to a power that is not a constant number, so the result's dimension is unknown; write the power as a number, such as ^2 or ^(1/2)"])
    expect(r.dimension).toBeUndefined()
  })

  it('a mismatch inside a longer formula quotes the part it is about', () => {
    const cells = [{ kind: 'parameter', name: 'Eg', value: 1.5, unit: 'eV' }, { kind: 'parameter', name: 'd', value: 850, unit: 'nm' }]
    expect(formula('2 * (Eg - d) / Eg', undefined, cells).warnings).toEqual([
      '"Eg - d" subtracts length (nm) from energy (eV): both sides of "-" need the same dimension (photon_energy(lambda) and photon_wavelength(E) convert between the two)',
    ])
    expect(formula('Eg + (1*eV)^2', undefined, cells).warnings).toEqual(['"Eg + (1*eV)^2" adds a quantity in J² to energy (eV): both sides of "+" need the same dimension'])
  })

  it('branches, array elements and exponents of different dimensions are warnings quoting the formula', () => {
    expect(formula('1 > 0 ? 1*eV : 1*nm').warnings).toEqual([
      'the two branches of "1 > 0 ? 1*eV : 1*nm" differ: one is energy (eV), the other length (nm); both need the same dimension',
    ])
    expect(formula('[1*eV, 1*nm]').warnings).toEqual(['the array "[1*eV, 1*nm]" mixes energy (eV) and length (nm); all its elements need the same dimension'])
    expect(formula('2^(1*nm)').warnings).toEqual(['the exponent in "2^(1*nm)" should be a dimensionless number, not a length (nm)'])
  })

  it('comparing an energy with a length is a warning', () => {
    expect(formula('1*eV > 1*nm').warnings).toEqual([
      '"1*eV > 1*nm" compares energy (eV) with length (nm): both sides of ">" need the same dimension (photon_energy(lambda) and photon_wavelength(E) convert between the two)',
    ])
  })

  it('a literal 0 fits any dimension', () => {
    expect(formula('1*eV + 0').warnings).toEqual([])
  })
})

describe('formula language: members', () => {
  const spectrum = {
    kind: 'spectrum', name: 'filmB',
    columns: { wavelength: { unit: 'nm', values: [500, 600, 700] }, T: { unit: '%', values: [10, 50, null] } },
  }

  it('filmB.T reads a spectrum column in SI (percent as a fraction, empty entries NaN)', () => {
    const r = formula('filmB.T', undefined, [spectrum])
    expect(r.value).toEqual([0.1, 0.5, NaN])
    expect(formula('filmB.wavelength', 'nm', [spectrum]).value).toEqual([500, 600, 700])
  })

  it('a missing column is an error listing the columns there are', () => {
    expect(formula('filmB.R', undefined, [spectrum]).error).toBe('the spectrum filmB has no column "R" (it has wavelength, T)')
  })

  it('a spectrum used without a member is an error suggesting a column', () => {
    expect(formula('filmB * 2', undefined, [spectrum]).error).toMatch(/filmB is a spectrum; use one of its columns, e\.g\. filmB\.wavelength/)
  })

  it('member access on a number is an error', () => {
    expect(formula('d.x', undefined, [{ kind: 'parameter', name: 'd', value: 1 }]).error).toMatch(/not a spectrum or fit/)
  })

  it('member access reaches one level only', () => {
    expect(formula('filmB.T.x', undefined, [spectrum]).error).toMatch(/member access only reaches/)
  })
})

describe('formula language: syntax', () => {
  it('a syntax error says where', () => {
    expect(formula('(1 + 2').error).toMatch(/^syntax error at column \d+: expected \)/)
    expect(formula('1 +').error).toBe('syntax error: the formula ends too early')
    expect(formula('x.', undefined, [{ kind: 'parameter', name: 'x', value: 1 }]).error).toBe('syntax error at column 3: expected a name')
    expect(formula('π*2').error).toBe('unknown name: π; write π as pi')
  })

  it('an empty formula is an error', () => {
    expect(formula('  ').error).toBe('the formula is empty')
  })

  it('assignments, statements, text, % and factorials are refused with their reason', () => {
    expect(formula('x = 3').error).toMatch(/assignments are not allowed/)
    expect(formula('f(x) = x').error).toMatch(/assignments are not allowed/)
    expect(formula('1; 2').error).toMatch(/one expression per formula/)
    expect(formula('"text"').error).toMatch(/text in quotes/)
    expect(formula('50 % 3').error).toMatch(/"%" is not an operator/)
    expect(formula('3!').error).toMatch(/factorials are not available/)
    expect(formula('[1, 2][0]').error).toMatch(/use at\(a, i\)/)
  })

  it('array literals, the ternary and and/or/not are part of the language; "in" and JavaScript keywords are refused by name', () => {
    expect(formula('[1, 2] * 2').value).toEqual([2, 4])
    expect(formula('2 > 1 ? 10 : 20').value).toBe(10)
    expect(formula('(1 and 0) or not 0').value).toBe(1)
    expect(formula('1 in [1, 2]').error).toBe('"in" is not part of the formula language (formulas are one expression of numbers, names and library functions)')
    expect(formula('typeof 1').error).toMatch(/^"typeof" is not part of the formula language/)
    expect(formula('new grid(0, 1, 2)').error).toMatch(/^"new" is not part of the formula language/)
  })

  it('a library function named without arguments is an unknown name that says how to call it', () => {
    expect(formula('sin').error).toBe('unknown name: sin; sin is a function: call it as sin(x)')
    expect(formula('grid * 2').error).toBe('unknown name: grid; grid is a function: call it as grid(from, to, n)')
  })

  it('an unknown function and a wrong argument count are errors naming the function', () => {
    expect(formula('frobnicate(1)').error).toBe('unknown function: frobnicate; check the spelling against the function library (the formula editor completes its names)')
    expect(formula('photonEnergy(500*nm)').error).toBe('unknown function: photonEnergy; did you mean photon_energy? Names are case-sensitive')
    expect(formula('grid(1, 2)').error).toBe('grid(from, to, n) takes 3 arguments, not 2')
    expect(formula('reflectance(1)').error).toBe('reflectance(n, k, [n0]) takes 2 to 3 arguments, not 1')
  })

  it('a physics function with an argument out of range says so with the value in the usual unit of that argument', () => {
    expect(formula('absorbed_fraction(1e4/cm, -1*nm)').error).toBe('absorbed_fraction: the thickness d must be zero or positive, but it is -1 nm')
    expect(formula('alpha_edge(1.5*eV, -0.2*eV, 1e9, 0.5, 0.02*eV)').error).toBe('alpha_edge: the gap Eg must be positive, but it is -0.2 eV')
    expect(formula('varshni([300, -5, 10]*K, 1.5*eV, 5e-4*eV/K, 200*K)').error)
      .toBe('varshni: the temperature T must be zero or positive (kelvin), but element 1 (counting from 0) is -5 K')
    expect(formula('transmittance_slab(1e4/cm, 1*um, 1.2)').error).toBe('transmittance_slab: the face reflectance R must be between 0 and 1, but it is 1.2')
    const flux = '[1e18, -2e18, 1e18]/(m^2*s*nm)'
    expect(formula(`detailed_balance(1.34*eV, 300*K, [400, 500, 600]*nm, ${flux})`).error)
      .toBe('detailed_balance: the photon flux must be finite and not negative, but element 1 (counting from 0) is -2e18 1/(m²·s·nm)')
    expect(formula('detailed_balance(1.34*eV, 300*K, [400, -500, 600]*nm, [1, 1, 1]/(m^2*s*nm))').error)
      .toBe('detailed_balance: the wavelength lambda must be positive, but element 1 (counting from 0) is -500 nm')
  })
})

describe('formula language: physics through formulas', () => {
  // Vurgaftman, Meyer & Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), Table III: GaAs Eg(0) = 1.519 eV,
  // α = 0.5405 meV/K, β = 204 K → Eg(300 K) = 1.519 − 0.5405e-3·300²/504 = 1.42248 eV
  it('varshni(300*K, 1.519*eV, 0.5405*meV/K, 204*K) gives GaAs 1.42248 eV', () => {
    const r = formula('varshni(300*K, 1.519*eV, 0.5405*meV/K, 204*K)', 'eV')
    expect(r.warnings).toEqual([])
    expect(rel(r.value as number, 1.519 - (0.5405e-3 * 300 * 300) / 504)).toBeLessThan(1e-12)
  })

  // kB·T/e at 300 K = 1.380649e-23·300/1.602176634e-19 eV (exact constants, CODATA 2018)
  it('kT(300*K) shown in meV is 25.852 meV', () => {
    expect(rel(num('kT(300*K)', 'meV'), (1.380649e-23 * 300) / 1.602176634e-22)).toBeLessThan(1e-12)
  })

  it('photon_energy(1*um) shown in eV is hc/e / 1000 nm = 1.239842 eV', () => {
    expect(rel(num('photon_energy(1*um)', 'eV'), 1.239841984332)).toBeLessThan(1e-12)
  })
})
