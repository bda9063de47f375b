import { describe, expect, it } from 'vitest';
import { PassThrough, Writable } from 'node:stream';
import type { Frame } from '../../src/frame.js';
import { Random } from '../../src/stats/random.js';
import { formatFrameCsvRows, framesCsvHeader, writeFramesCsv } from '../../tools/io/writeFramesCsv.js';
import { CentroidCsvParser } from '../../tools/io/centroidCsvParser.js';

function makeFrames(seed: number, withOptional: boolean): Frame[] {
  const random = new Random(seed);
  const frames: Frame[] = [];
  for (let index = 0; index < 60; index++) {
    const count = 1 + Math.floor(random.uniform() * 8);
    const frame: Frame = {
      index: index * 2, // gaps in the frame numbers are kept
      t: index * 0.033 + random.uniform() * 1e-4,
      count,
      x: Float64Array.from({ length: count }, () => random.normal() * 1e3),
      y: Float64Array.from({ length: count }, () => random.uniform() * 1e-9),
    };
    if (withOptional) {
      frame.z = Float64Array.from({ length: count }, () => -random.uniform());
      frame.id = Uint32Array.from({ length: count }, (_, k) => (k === 0 ? 0xffffffff : k));
      frame.intensity = Float64Array.from({ length: count }, () => random.uniform() * 5000);
    }
    frames.push(frame);
  }
  return frames;
}

async function collect(frames: Frame[]): Promise<string> {
  let text = '';
  const out = new Writable({ write(chunk, _encoding, done) { text += chunk.toString(); done(); } });
  await writeFramesCsv(frames, out, { batchBytes: 512 });
  return text;
}

function readBack(text: string): Frame[] {
  const frames: Frame[] = [];
  const parser = new CentroidCsvParser({}, (f) => frames.push(f));
  parser.push(Buffer.from(text));
  const summary = parser.finish();
  expect(summary.rejectedRows).toBe(0);
  return frames;
}

describe('writeFramesCsv', () => {
  it('readCentroids(writeFramesCsv(frames)) gives the frames back bit for bit', async () => {
    // ECMA-262 Number::toString gives the shortest text that reads back to the same double,
    // so a write/read round trip must be exact; CONTRACTS.md §2 is the format.
    for (const withOptional of [false, true]) {
      const frames = makeFrames(withOptional ? 5 : 6, withOptional);
      expect(readBack(await collect(frames))).toEqual(frames);
    }
  });

  it('framesCsvHeader(columns) names frame, t, x, y and the optional columns present', () => {
    // CONTRACTS.md §2 column names.
    expect(framesCsvHeader({ z: true, id: true, intensity: true })).toBe('frame,t,x,y,z,id,intensity\n');
    expect(framesCsvHeader({ z: false, id: false, intensity: false })).toBe('frame,t,x,y\n');
  });

  it('formatFrameCsvRows(frame) writes one line per centroid and only the first count entries', () => {
    // src/frame.ts: only the first count entries of a frame's arrays are meaningful.
    const frame: Frame = { index: 7, t: 0.25, count: 2, x: Float64Array.of(1.5, -2, 99), y: Float64Array.of(0.1, 3e-7, 99), id: Uint32Array.of(4, 5, 6) };
    expect(formatFrameCsvRows(frame, { z: false, id: true, intensity: false })).toBe('7,0.25,1.5,0.1,4\n7,0.25,-2,3e-7,5\n');
  });

  it('writeFramesCsv throws JOSTLE_E_EXPORT when a frame lacks a declared column', async () => {
    // STYLE.md §9: errors crossing a boundary carry a code.
    const frames: Frame[] = [{ index: 0, t: 0, count: 1, x: Float64Array.of(1), y: Float64Array.of(2) }];
    await expect(writeFramesCsv(frames, new PassThrough(), { columns: { z: true, id: false, intensity: false } }))
      .rejects.toMatchObject({ code: 'JOSTLE_E_EXPORT' });
  });

  it('writeFramesCsv waits for drain on a slow stream and still writes everything', async () => {
    // Node.js stream docs, writable.write(): false means wait for 'drain' (back-pressure).
    const frames = makeFrames(8, false);
    const chunks: string[] = [];
    const slow = new Writable({
      highWaterMark: 64,
      write(chunk, _encoding, done) { chunks.push(chunk.toString()); setImmediate(done); },
    });
    const result = await writeFramesCsv(frames, slow, { batchBytes: 100 });
    expect(result.frames).toBe(frames.length);
    expect(result.rows).toBe(frames.reduce((n, f) => n + f.count, 0));
    expect(readBack(chunks.join(''))).toEqual(frames);
  });
});
