// The one place the project takes zod from, configured before any schema exists. jitless: zod
// would otherwise compile each object schema into generated code with `new Function` on its
// first parse; the desktop renderer's content security policy forbids that, and a command that
// parses one small spec pays more for the compilation than it saves.
import { z } from 'zod';

z.config({ jitless: true });

export { z };
