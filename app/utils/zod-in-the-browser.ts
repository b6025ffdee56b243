import { z } from 'zod'

// zod 4 probes whether it may compile validators with `new Function` when the first object schema is built; under our
// content security policy (no 'unsafe-eval') the browser refuses that probe and reports a policy violation on every
// page. Jitless mode skips the probe and validates the same way without generated code. The root route imports this
// module first, so it runs before any module builds a schema; the server, which has no such policy, keeps the JIT.
if (typeof document !== 'undefined') z.config({ jitless: true })
