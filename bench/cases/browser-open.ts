/**
 * browser-open: how long the built app takes to show a demo sheet in headless Chromium, beside the sign-in page in the
 * same run (the ratio is what the target is about; the milliseconds move with the machine's load).
 *
 * The real server runs as a child (`node --import tsx server/index.ts`) on a free port with a temporary DATA_DIR, so
 * the demo lab is seeded fresh. For each demo sheet: 5 cold opens (a new browser context each time: empty HTTP cache,
 * no kept copy, no service worker) and 5 warm opens (one context that has opened the sheet before). Each open is
 * timed inside the page from the start of navigation (performance.now()) to
 *   - first cell: the first card in the DOM, either the server's first view of the sheet (`.pn-preview-card`, names,
 *     kinds, units, values and formulas, read-only) or a live card (`.pn-cell`), whichever comes first,
 *   - first live card: the first `.pn-cell`, the card a person can edit, with its result when one is ready,
 *   - first figure: the first plot drawn (`.pn-plot .main-svg`), for sheets with a figure cell; as a reader would,
 *     the page is scrolled to the first figure as soon as its card exists (figures draw only near the viewport),
 * and the sign-in page to its Sign in button, cold and warm alike. Beside them, the charting library alone: its built
 * chunk imported into an empty page of the same server and one line drawn, the floor under any first figure.
 *
 * Needs the built client (`npx vite build`) and /usr/bin/chromium. `npm run bench -- browser` runs it alone.
 * `BROWSER_BENCH_RUNS=<n>` changes the 5. Targets (on the shared 2-core machine): first cell ≤ 1 s, first figure
 * ≤ 2 s, first cell ≤ 5× the sign-in page.
 */
import { existsSync, readdirSync } from 'node:fs'
import path from 'node:path'
import { chromium, type Browser, type BrowserContext } from 'playwright-core'
import { CHROMIUM, CHROMIUM_ARGS, DEMO, DEMO_LAB, ROOT, startServer } from '../../tests/utils/browser'
import { CSRF_HEADER } from '../../shared/schema/api'
import { median, printBench, printTarget } from '../harness'

const RUNS = Math.max(1, Number(process.env.BROWSER_BENCH_RUNS) || 5)

/** Installed before any page script: notes when the first card, the first drawn plot and the sign-in button appear. */
const PROBE = `(() => {
  const seen = (window.__pnOpen = {})
  const check = () => {
    if (seen.cell === undefined && document.querySelector('.pn-cell, .pn-preview-card')) seen.cell = performance.now()
    if (seen.live === undefined && document.querySelector('.pn-cell')) seen.live = performance.now()
    if (seen.figure === undefined && document.querySelector('.pn-plot .main-svg')) seen.figure = performance.now()
    // a reader heads for the first figure at once (figures draw only near the viewport)
    const plot = document.querySelector('.pn-plot .plot')
    if (seen.scrolled === undefined && plot) {
      seen.scrolled = performance.now()
      plot.scrollIntoView({ block: 'center' })
    }
    if (seen.signIn === undefined && document.querySelector('form button[type="submit"]')) seen.signIn = performance.now()
  }
  new MutationObserver(check).observe(document, { childList: true, subtree: true })
})()`

interface OpenTimes {
  cell?: number
  live?: number
  figure?: number
  signIn?: number
}

async function newContext(browser: Browser): Promise<BrowserContext> {
  const context = await browser.newContext({ viewport: { width: 1280, height: 800 } })
  await context.addInitScript(PROBE)
  return context
}

async function signInBy(context: BrowserContext, base: string): Promise<void> {
  const res = await context.request.post(`${base}/api/auth/sign-in`, {
    data: { email: DEMO.owner.email, password: DEMO.owner.password },
    headers: { [CSRF_HEADER]: '1' },
  })
  if (!res.ok()) throw new Error(`signing in answered ${res.status()}`)
}

/** Opens `url` in a new tab of `context` and waits for the given marks (or 120 s: a loaded shared machine is slow). */
async function open(context: BrowserContext, url: string, want: (keyof OpenTimes)[]): Promise<OpenTimes> {
  const page = await context.newPage()
  try {
    await page.goto(url, { waitUntil: 'commit' })
    await page.waitForFunction((keys) => keys.every((k) => (window as unknown as { __pnOpen?: Record<string, number> }).__pnOpen?.[k] !== undefined), want, {
      timeout: 120_000,
      polling: 50,
    })
    return await page.evaluate(() => ({ ...(window as unknown as { __pnOpen: OpenTimes }).__pnOpen }))
  } finally {
    await page.close()
  }
}

function fmt(ms: number): string {
  return `${Math.round(ms)} ms`
}
function spread(xs: number[]): string {
  return `${Math.round(Math.min(...xs))}–${Math.round(Math.max(...xs))}`
}

export default async function browserOpen(): Promise<void> {
  if (!existsSync(CHROMIUM)) {
    console.log(`bench browser-open: skipped, ${CHROMIUM} is missing (apt-get install chromium)`)
    return
  }
  if (!existsSync(path.join(ROOT, 'dist', 'index.html'))) {
    console.log('bench browser-open: skipped, the client is not built (run `npx vite build` first)')
    return
  }
  const server = await startServer()
  const browser = await chromium.launch({ executablePath: CHROMIUM, headless: true, args: CHROMIUM_ARGS })
  try {
    const base = server.url
    const probe = await newContext(browser)
    await signInBy(probe, base)
    const labs = (await (await probe.request.get(`${base}/api/labs`)).json()) as { labs: { id: string; name: string }[] }
    const lab = labs.labs.find((l) => l.name === DEMO_LAB)
    if (!lab) throw new Error(`the seed has no "${DEMO_LAB}"`)
    const list = (await (await probe.request.get(`${base}/api/labs/${lab.id}/sheets`)).json()) as { sheets: { id: string; title: string }[] }
    await probe.close()

    // sign-in page: cold (fresh context each time) and warm (one context), signed out
    const signInCold: number[] = []
    const signInWarm: number[] = []
    const warmSignIn = await newContext(browser)
    await open(warmSignIn, `${base}/sign-in`, ['signIn'])
    for (let i = 0; i < RUNS; i++) {
      const c = await newContext(browser)
      signInCold.push((await open(c, `${base}/sign-in`, ['signIn'])).signIn!)
      await c.close()
      signInWarm.push((await open(warmSignIn, `${base}/sign-in`, ['signIn'])).signIn!)
    }
    await warmSignIn.close()
    const signIn = { cold: median(signInCold), warm: median(signInWarm) }
    printBench('browser-open sign-in page cold', signIn.cold)
    console.log(`  ${RUNS} opens: ${spread(signInCold)} ms; warm ${fmt(signIn.warm)} (${spread(signInWarm)} ms)`)

    // the charting library by itself: the floor under any first figure the app draws with it
    const chartAlone: number[] = []
    for (let i = 0; i < RUNS; i++) chartAlone.push(await chartingLibraryAlone(browser, base))
    printBench('browser-open charting library alone, cold', median(chartAlone))
    console.log(`  ${RUNS} runs: ${spread(chartAlone)} ms from import() of its chunk to one line drawn on a log axis, in an empty page`)

    let allMet = true
    for (const sheet of list.sheets) {
      const hasFigure = await sheetHasFigure(browser, base, sheet.id)
      const want: (keyof OpenTimes)[] = hasFigure ? ['cell', 'live', 'figure'] : ['cell', 'live']
      const cold: OpenTimes[] = []
      const warm: OpenTimes[] = []
      const warmContext = await newContext(browser)
      await signInBy(warmContext, base)
      await open(warmContext, `${base}/sheets/${sheet.id}`, want)
      for (let i = 0; i < RUNS; i++) {
        const c = await newContext(browser)
        await signInBy(c, base)
        cold.push(await open(c, `${base}/sheets/${sheet.id}`, want))
        await c.close()
        warm.push(await open(warmContext, `${base}/sheets/${sheet.id}`, want))
      }
      await warmContext.close()
      for (const [kind, times, ref] of [
        ['cold', cold, signIn.cold],
        ['warm', warm, signIn.warm],
      ] as const) {
        const cells = times.map((t) => t.cell!)
        const cell = median(cells)
        const ratio = cell / ref
        printBench(`browser-open "${sheet.title}" ${kind} first cell`, cell, ratio, `sign-in page ${kind}`)
        const lives = times.map((t) => t.live!)
        const notes = [`${RUNS} opens: ${spread(cells)} ms`, `first live card ${fmt(median(lives))} (${spread(lives)} ms)`]
        let figure: number | undefined
        if (hasFigure) {
          const figures = times.map((t) => t.figure!)
          figure = median(figures)
          notes.push(`first figure ${fmt(figure)} (${spread(figures)} ms)`)
        }
        console.log(`  ${notes.join('; ')}`)
        const cellMet = cell <= 1000 && ratio <= 5
        printTarget('first cell ≤ 1 s and ≤ 5× sign-in', cellMet)
        allMet &&= cellMet
        if (figure !== undefined) {
          printTarget('first figure ≤ 2 s', figure <= 2000)
          allMet &&= figure <= 2000
        }
      }
    }
    if (!allMet) console.log('  (a target missed under load says little on this shared machine: run again when it is quiet)')
  } finally {
    await browser.close().catch(() => undefined)
    await server.stop()
  }
}

/** Whether the sheet has a figure cell, read from its file. */
async function sheetHasFigure(browser: Browser, base: string, sheetId: string): Promise<boolean> {
  const c = await browser.newContext()
  try {
    await signInBy(c, base)
    const res = await c.request.get(`${base}/api/sheets/${sheetId}/file`)
    if (!res.ok()) throw new Error(`the sheet file answered ${res.status()}`)
    const file = (await res.json()) as { cells: { kind: string }[] }
    return file.cells.some((cell) => cell.kind === 'figure')
  } finally {
    await c.close()
  }
}

/**
 * Milliseconds from import() of the built charting-library chunk (the one the figure cards load) to one small line
 * drawn on a log axis, in a fresh profile on a page of the same server with nothing else running in it.
 */
async function chartingLibraryAlone(browser: Browser, base: string): Promise<number> {
  const chunk = readdirSync(path.join(ROOT, 'dist', 'assets')).find((f) => /^plotly.*\.js$/.test(f))
  if (!chunk) throw new Error('the built client has no charting-library chunk in dist/assets')
  const context = await browser.newContext()
  try {
    const page = await context.newPage()
    await page.goto(`${base}/api/health`)
    return await page.evaluate(async (url) => {
      const t0 = performance.now()
      const mod = (await import(url)) as { default: { newPlot: (el: HTMLElement, data: unknown[], layout: unknown, config: unknown) => Promise<unknown> } }
      const el = document.createElement('div')
      el.style.cssText = 'width:600px;height:400px'
      document.body.append(el)
      await mod.default.newPlot(el, [{ x: [1, 2, 3], y: [1, 30, 200], type: 'scatter' }], { yaxis: { type: 'log' } }, { displayModeBar: false, staticPlot: false })
      return performance.now() - t0
    }, `/assets/${chunk}`)
  } finally {
    await context.close()
  }
}
