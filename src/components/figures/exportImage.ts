/**
 * Figure files in Penumbra's type: an SVG drawn by plotly gets the Fira faces it names embedded (an @font-face per
 * face with the font file as a data: URL), so it shows Fira wherever it is opened; a PNG is that same SVG drawn onto a
 * canvas, where the embedded faces are the ones used. Plotly's own PNG export would draw with whatever fonts the
 * system has. Files are handed to the browser's download through a blob: URL; nothing leaves the page.
 */
import sansLatin from '@fontsource/fira-sans/files/fira-sans-latin-400-normal.woff2?url'
import sansGreek from '@fontsource/fira-sans/files/fira-sans-greek-400-normal.woff2?url'
import monoLatin from '@fontsource/fira-mono/files/fira-mono-latin-400-normal.woff2?url'
import monoGreek from '@fontsource/fira-mono/files/fira-mono-greek-400-normal.woff2?url'

/** The Greek block, as in src/assets/fonts-greek.css (the Latin faces cover everything else they hold). */
const GREEK = 'U+0370-0377, U+037A-037F, U+0384-038A, U+038C, U+038E-03A1, U+03A3-03FF'

const FACES: { family: string; url: string; range?: string }[] = [
  { family: 'Fira Sans', url: sansLatin },
  { family: 'Fira Sans', url: sansGreek, range: GREEK },
  { family: 'Fira Mono', url: monoLatin },
  { family: 'Fira Mono', url: monoGreek, range: GREEK },
]

function asDataUrl(blob: Blob): Promise<string> {
  return new Promise((resolve, reject) => {
    const reader = new FileReader()
    reader.onload = () => resolve(String(reader.result))
    reader.onerror = () => reject(reader.error ?? new Error('the font file could not be read'))
    reader.readAsDataURL(blob)
  })
}

let fontCss: Promise<string> | null = null
/** The @font-face rules with the fonts inline (fetched once per page from the app's own assets). */
export function embeddedFontCss(): Promise<string> {
  fontCss ??= Promise.all(
    FACES.map(async (f) => {
      const res = await fetch(f.url)
      if (!res.ok) throw new Error(`the font file ${f.url} answered ${res.status}`)
      const data = await asDataUrl(new Blob([await res.arrayBuffer()], { type: 'font/woff2' }))
      return `@font-face{font-family:'${f.family}';font-style:normal;font-weight:400;src:url(${data}) format('woff2');${f.range ? `unicode-range:${f.range};` : ''}}`
    }),
  ).then((rules) => rules.join('\n'))
  fontCss.catch(() => {
    fontCss = null
  })
  return fontCss
}

/** Waits until the page's Fira faces are loaded, so plotly measures labels with the widths they will have in the file. */
export async function fontsReady(): Promise<void> {
  if (typeof document === 'undefined' || !document.fonts) return
  await Promise.all([document.fonts.load("400 12px 'Fira Sans'", 'Aα'), document.fonts.load("400 11px 'Fira Mono'", '0α')])
}

/** The SVG text in a data: URL as plotly's toImage gives it (URI-encoded or base64). */
export function svgFromDataUrl(url: string): string {
  const comma = url.indexOf(',')
  const head = url.slice(0, comma)
  const body = url.slice(comma + 1)
  return head.endsWith(';base64') ? new TextDecoder().decode(Uint8Array.from(atob(body), (c) => c.charCodeAt(0))) : decodeURIComponent(body)
}

/** The SVG with a <style> of embedded font faces as its first child. */
export function withEmbeddedFonts(svg: string, css: string): string {
  const open = /<svg\b[^>]*>/.exec(svg)
  if (!open) throw new Error('the drawing is not an SVG')
  const at = open.index + open[0].length
  return `${svg.slice(0, at)}<style>${css}</style>${svg.slice(at)}`
}

/** Draws an SVG onto a canvas `scale` times its size and gives the PNG. */
export async function svgToPng(svg: string, width: number, height: number, scale = 2): Promise<Blob> {
  const url = URL.createObjectURL(new Blob([svg], { type: 'image/svg+xml' }))
  try {
    const img = new Image()
    img.src = url
    await img.decode()
    const canvas = document.createElement('canvas')
    canvas.width = Math.round(width * scale)
    canvas.height = Math.round(height * scale)
    const ctx = canvas.getContext('2d')
    if (!ctx) throw new Error('this browser gave no canvas to draw on')
    ctx.drawImage(img, 0, 0, canvas.width, canvas.height)
    return await new Promise<Blob>((resolve, reject) => canvas.toBlob((b) => (b ? resolve(b) : reject(new Error('the canvas gave no PNG'))), 'image/png'))
  } finally {
    URL.revokeObjectURL(url)
  }
}

/** Hands a file to the browser's download. */
export function saveFile(blob: Blob, filename: string): void {
  const url = URL.createObjectURL(blob)
  const a = document.createElement('a')
  a.href = url
  a.download = filename
  a.rel = 'noopener'
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 10_000)
}
