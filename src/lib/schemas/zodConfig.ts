import { z } from 'zod';

// Zod 4 probes for `new Function` to compile fast parsers; under our Content-Security-Policy (no
// 'unsafe-eval') that probe logs a violation in the browser. The interpreted parsers are fast enough.
z.config({ jitless: true });
