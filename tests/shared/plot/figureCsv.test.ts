import { describe, it, expect } from 'vitest'
import { figureCsv } from '../../../shared/plot/figureCsv'
import type { FigureModel } from '../../../shared/plot/figure'

const axis = (title: string) => ({ title, unit: '', scale: 'linear' as const, quantity: null })
const model = (m: Partial<FigureModel>): FigureModel => ({ series: [], x: axis('E (eV)'), y: axis('α (cm⁻¹)'), band: null, marks: [], markAxis: 'x', regions: [], messages: [], ...m })

describe('figureCsv', () => {
  it('figureCsv writes two columns per trace, leaves the shorter ones empty and gaps as empty fields', () => {
    const csv = figureCsv(
      model({
        series: [
          { name: 'model', x: [1.4, 1.5, 1.6], y: [0, 1e4, NaN], style: 'line', color: '#000' },
          { name: 'measured, film B', x: [1.45], y: [5000], style: 'points', color: '#111' },
        ],
      }),
    )
    expect(csv).toBe(
      'model · E (eV),model · α (cm⁻¹),"measured, film B · E (eV)","measured, film B · α (cm⁻¹)"\r\n' +
        '1.4,0,1.45,5000\r\n' +
        '1.5,10000,,\r\n' +
        '1.6,,,\r\n',
    )
  })
  it('figureCsv writes a sweep map as a table: x along the first row, one parameter value per further row', () => {
    const csv = figureCsv(
      model({
        x: axis('λ (nm)'),
        y: axis('d (nm)'),
        sweep: {
          view: 'map',
          map: { output: 'A', outputs: ['A'], x: [400, 500], xUnit: 'nm', y: [100, 200], parameterUnit: 'nm', z: [[0.5, 0.3], [0.7, 0.5]] },
          zUnit: '',
          zTitle: 'A',
          logParameter: false,
        },
      }),
    )
    expect(csv).toBe('"A · rows: d (nm), columns: λ (nm)",400,500\r\n100,0.5,0.3\r\n200,0.7,0.5\r\n')
  })
})
