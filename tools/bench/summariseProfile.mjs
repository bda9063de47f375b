// Summarises a V8 .cpuprofile (from `node --cpu-prof`): top functions by self time, in % of the total.
// Run: node tools/bench/summariseProfile.mjs <folder with one .cpuprofile> [rows=25]
import { readFileSync, readdirSync } from 'node:fs';
const dir = process.argv[2];
const file = readdirSync(dir).filter(f => f.endsWith('.cpuprofile'))[0];
const prof = JSON.parse(readFileSync(dir + '/' + file, 'utf8'));
const self = new Map();
const dt = prof.timeDeltas; const total = dt.reduce((a, b) => a + b, 0);
const byId = new Map(prof.nodes.map(n => [n.id, n]));
const counts = new Map();
prof.samples.forEach((s, i) => counts.set(s, (counts.get(s) ?? 0) + dt[i]));
for (const [id, t] of counts) { const n = byId.get(id); const cf = n.callFrame; const k = `${cf.functionName || '(anon)'} ${cf.url.split('/').slice(-2).join('/')}:${cf.lineNumber + 1}`; self.set(k, (self.get(k) ?? 0) + t); }
const rows = [...self].sort((a, b) => b[1] - a[1]).slice(0, Number(process.argv[3] ?? 25));
for (const [k, t] of rows) console.log((100 * t / total).toFixed(1).padStart(5) + '%  ' + k);
