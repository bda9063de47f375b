import { describe, expect, it } from 'vitest';
import { Writable } from 'node:stream';
import { progressReporter } from '../../tools/io/progressReporter.js';

function fakeStream(isTTY: boolean) {
  const writes: string[] = [];
  const stream = Object.assign(new Writable({ write(chunk, _e, done) { writes.push(chunk.toString()); done(); } }), { isTTY });
  return { stream, writes };
}

describe('progressReporter', () => {
  describe('#update', () => {
    it('progressReporter(tty).update prints percent, MB/s and time left on one \\r line', () => {
      // common practice, no source: a terminal progress line is rewritten in place with \r.
      const { stream, writes } = fakeStream(true);
      let now = 1_000;
      const progress = progressReporter(stream, 100e6, { intervalMs: 250 }, () => now);
      now += 2_000;
      progress.update(40e6); // 40 MB in 2 s: 20 MB/s, 60 MB left → 3 s
      expect(writes).toEqual(['\r 40.0 %   20.0 MB/s   0:03 left']);
    });

    it('progressReporter(tty).update throttles to one line per intervalMs', () => {
      // common practice, no source: throttled progress output.
      const { stream, writes } = fakeStream(true);
      let now = 0;
      const progress = progressReporter(stream, 1000, { intervalMs: 250 }, () => now);
      for (let k = 1; k <= 10; k++) {
        now = k * 100;
        progress.update(k * 100);
      }
      // Prints at 100 ms, then at ≥ 350 ms (400), ≥ 650 ms (700), ≥ 950 ms (1000).
      expect(writes.length).toBe(4);
      expect(writes.at(-1)).toContain('100.0 %');
    });

    it('progressReporter(tty) without a total prints MB read and MB/s', () => {
      // common practice, no source.
      const { stream, writes } = fakeStream(true);
      let now = 0;
      const progress = progressReporter(stream, undefined, {}, () => now);
      now = 500;
      progress.update(5e6);
      expect(writes).toEqual(['\r5.0 MB read   10.0 MB/s']);
    });

    it('progressReporter(non-tty) prints nothing', () => {
      // common practice, no source: no progress noise when stderr is piped.
      const { stream, writes } = fakeStream(false);
      let now = 0;
      const progress = progressReporter(stream, 1000, {}, () => now);
      now = 1000;
      progress.update(500);
      progress.finish();
      expect(writes).toEqual([]);
    });
  });

  describe('#finish', () => {
    it('progressReporter(tty).finish blanks the line it printed', () => {
      // common practice, no source: \r + spaces + \r clears a progress line.
      const { stream, writes } = fakeStream(true);
      let now = 0;
      const progress = progressReporter(stream, 1e6, {}, () => now);
      now = 1000;
      progress.update(1e5);
      const printed = writes[0].length - 1;
      progress.finish();
      expect(writes[1]).toBe('\r' + ' '.repeat(printed) + '\r');
      progress.finish();
      expect(writes.length).toBe(2);
    });
  });
});
