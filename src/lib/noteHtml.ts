/** A note's Markdown as HTML: rendered with marked, sanitised with DOMPurify (no scripts, styles, forms or event handlers). */
import { marked } from 'marked'
import DOMPurify from 'dompurify'

export function noteHtml(text: string): string {
  const raw = marked.parse(text, { async: false, gfm: true, breaks: false }) as string
  return DOMPurify.sanitize(raw, { USE_PROFILES: { html: true }, FORBID_TAGS: ['style', 'form', 'input', 'button'], FORBID_ATTR: ['style'] })
}
