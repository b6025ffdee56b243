// Starts the document renderer thread: registers tsx's loader in this thread, then runs the TypeScript worker.
import { register } from 'tsx/esm/api'

register()
await import('./render-worker.ts')
