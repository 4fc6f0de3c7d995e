// STYLE point 1: shared/ is the pure core run by the browser worker, the server and the command line alike,
// so it may import nothing from Vue, Pinia, Express, ws, Drizzle, node:* or the DOM.
import { describe, it, expect } from 'vitest'
import { readdirSync, readFileSync, statSync } from 'node:fs'
import path from 'node:path'

const root = path.resolve(__dirname, '../../shared')
const forbidden = /^(vue|pinia|vue-router|element-plus|express|ws|drizzle-orm|better-sqlite3|node:|fs$|path$|os$|child_process|http$|https$|crypto$)/

function sources(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = path.join(dir, name)
    if (statSync(full).isDirectory()) return sources(full)
    return /\.ts$/.test(name) ? [full] : []
  })
}

describe('shared/ core', () => {
  it('imports nothing from UI, server, database or Node built-ins', () => {
    const offenders: string[] = []
    for (const file of sources(root)) {
      const text = readFileSync(file, 'utf8')
      for (const m of text.matchAll(/(?:import|export)[^'"]*?from\s+['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g)) {
        const spec = m[1] ?? m[2]
        if (forbidden.test(spec)) offenders.push(`${path.relative(root, file)} imports ${spec}`)
      }
      if (/\b(?:window\.(?:addEventListener|document|location|innerWidth|requestAnimationFrame|navigator)|document\.(?:getElement|querySelector|createElement|body|cookie)|localStorage|sessionStorage)\b/.test(text)) offenders.push(`${path.relative(root, file)} touches the DOM`)
    }
    expect(offenders).toEqual([])
  })
})
