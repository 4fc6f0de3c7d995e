// Entry of an evaluation worker thread. Worker threads do not inherit the main thread's TypeScript loader
// (`node --import tsx`), so this plain module loads the TypeScript body through tsx's own API.
import { tsImport } from 'tsx/esm/api'

await tsImport('./evaluationWorker.ts', import.meta.url)
