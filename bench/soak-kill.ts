/**
 * Soak: twenty kill -9 trials of the collaboration server (`node --import tsx bench/soak-kill.ts [trials]`).
 * Each trial starts a server in a child process, streams a writer's keystrokes through it to an observer, SIGKILLs it
 * mid-stream, restarts it on the same database and checks that every keystroke the observer received was stored and
 * that the writer's reconnect brings back the rest. Exits 1 if any trial lost anything. Loopback only.
 */
import { killTrial } from '../tests/collab/support/killTrial'

async function main() {
  const trials = Math.max(1, Math.min(200, Number(process.argv[2] ?? 20) || 20))
  let failures = 0
  let relayed = 0
  console.log(`kill -9 soak: ${trials} trials of 600 keystrokes, SIGKILL after 100…500 relayed`)
  for (let i = 0; i < trials; i++) {
    // Spread the kill point over the stream so it lands in different phases of the group commit.
    const killAfter = 100 + Math.round((400 * i) / Math.max(1, trials - 1))
    const started = Date.now()
    const r = await killTrial({ typed: 600, killAfter })
    const ok = r.lostRelayed === 0 && r.storedAfterRestart >= r.relayed && r.convergedAfterReconnect
    if (!ok) failures++
    relayed += r.relayed
    console.log(
      `trial ${String(i + 1).padStart(2)}: relayed ${String(r.relayed).padStart(3)}, stored after restart ${String(r.storedAfterRestart).padStart(3)}, ` +
        `lost ${r.lostRelayed}, writer caught up ${r.convergedAfterReconnect ? 'yes' : 'NO'} (${Date.now() - started} ms)${ok ? '' : '  << FAILED'}`,
    )
  }
  console.log(`${trials - failures}/${trials} trials kept every relayed update (${relayed} relayed in all)`)
  process.exitCode = failures === 0 ? 0 : 1
}

await main()
