import { Piscina } from 'piscina';
import path from 'node:path';
const file = path.resolve('src/lib/server/jobs/threads/bootstrap.mjs');
for (const mb of [24, 32, 48]) {
  const pool = new Piscina({ filename: file, maxThreads: 1, resourceLimits: { maxOldGenerationSizeMb: mb, maxYoungGenerationSizeMb: 8 } });
  try { await pool.run({ task: 'nope', input: {} }); } catch (e) { console.log(mb, 'MB:', String(e.message).slice(0, 100), e.code ?? ''); }
  await pool.destroy();
}
