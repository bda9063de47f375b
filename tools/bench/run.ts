// `npm run bench`: every benchmark figure, each with its ratio to a baseline measured in the same run.
import { analyzeThroughput } from './analyzeThroughput.js';
import { machineLine, table } from './harness.js';

console.log(`jostle benchmarks — ${machineLine()}`);
console.log('\n## analyze (CSV → report)\n');
const analyze = await analyzeThroughput();
console.log(table(analyze, analyze[0]));
