import { randomUUID } from 'node:crypto';
import { rmSync } from 'node:fs';
import { openDatabase } from './src/lib/server/db';
import { runs, setups } from './src/lib/server/db/schema';
import { RunWriter, DEFAULT_SNAPSHOT_POLICY } from './src/lib/server/ingest/run-writer';
const dir = '/tmp/wbench2'; rmSync(dir, { recursive: true, force: true });
const { db, client } = await openDatabase(dir, 'drizzle');
const setupId = randomUUID();
await db.insert(setups).values({ id: setupId, name: 's', order: 3, states: 6, modeGHz: 5, nominalMK: 12 });
const [run] = await db.insert(runs).values({ id: randomUUID(), setupId, key: 'k', name: 'n', order: 3, states: 6, modeGHz: 5 }).returning();
const w = await RunWriter.open(db, run, {}, { states: 6, openedAt_ms: 0 }, DEFAULT_SNAPSHOT_POLICY, () => {}, (e) => console.error(e));
const frame = (seq: number) => ({ seq, t: 1_796_000_000_000 + seq * 1000, window_s: 1, shots: 2000, vacuum: 40, counts: [330, 325, 327, 326, 322, 330], lock: 0.93, switches: 2, dwell_s: 0.98, escapes: 0, vacuum_s: 0.02, aux: { mxc_mK: 12.1 } });
// Time each statement
const orig = client.query.bind(client);
const times = new Map<string, number[]>();
(client as any).query = async (q: string, p: any, o: any) => { const t0 = performance.now(); try { return await orig(q, p, o); } finally { const k = q.trim().slice(0, 40); (times.get(k) ?? times.set(k, []).get(k)!).push(performance.now() - t0); } };
const origTx = client.transaction.bind(client);
(client as any).transaction = async (cb: any) => { const t0 = performance.now(); try { return await origTx(async (tx: any) => { const q0 = tx.query.bind(tx); tx.query = async (q: string, p: any, o: any) => { const s0 = performance.now(); try { return await q0(q, p, o); } finally { const k = 'TX ' + q.trim().replace(/\s+/g,' ').slice(0, 40); (times.get(k) ?? times.set(k, []).get(k)!).push(performance.now() - s0); } }; return cb(tx); }); } finally { (times.get('TRANSACTION') ?? times.set('TRANSACTION', []).get('TRANSACTION')!).push(performance.now() - t0); } };
const origExec = client.exec.bind(client);
(client as any).exec = async (q: string, o: any) => { const t0 = performance.now(); try { return await origExec(q, o); } finally { const k = 'EXEC ' + q.trim().slice(0, 30); (times.get(k) ?? times.set(k, []).get(k)!).push(performance.now() - t0); } };
const N = 300;
const t0 = performance.now();
for (let i = 1; i <= N; i++) { w.enqueue([frame(i)]); await w.idle(); }
console.log('per commit', ((performance.now() - t0) / N).toFixed(2));
for (const [k, v] of times) console.log(k.padEnd(45), v.length, (v.reduce((a, b) => a + b, 0) / v.length).toFixed(3));
await client.close();
