// zod probes whether it may compile validators with Function(); under our CSP (no 'unsafe-eval') the
// probe is blocked and the browser logs a policy violation on every page. Tell zod not to try.
import { z } from 'zod';

z.config({ jitless: true });
