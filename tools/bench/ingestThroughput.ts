// Benchmark: the ingest stage (decode and validate one frame message into typed arrays) against
// peers measured in the same run: msgpackr columnar decode copying into typed arrays allocated
// once (the ceiling), new typed arrays per message, row-wise objects (msgpack maps and records),
// and a JSON row-wise rig (JSON.parse of rows, then validation into typed arrays: the baseline the
// target is set against). Run: node --import tsx/esm tools/bench/ingestThroughput.ts [particles=10000]
import { Packr, Unpackr } from 'msgpackr';
import { decodeMessage } from '../../server/decodeMessage.js';
import { FrameBuffers } from '../../server/frameBuffers.js';
import { benchFrames } from './benchFrames.js';
import { machineLine, measureRate, table, type BenchFigure } from './harness.js';

/** Encoded messages of each kind for the same frames. */
function messages(particles: number, count: number) {
  const frames = benchFrames({ particles, frames: count, frameInterval: 0.001 });
  const packr = new Packr({ useRecords: false });
  const structures: object[] = [];
  const recordPackr = new Packr({ useRecords: true, structures: structures as never });
  const columnar: Buffer[] = [];
  const mapRows: Buffer[] = [];
  const recordRows: Buffer[] = [];
  const jsonRows: string[] = [];
  for (const f of frames) {
    const bytes = (a: Float64Array | Uint32Array) => new Uint8Array(a.buffer, a.byteOffset, f.count * a.BYTES_PER_ELEMENT);
    columnar.push(packr.pack({ type: 'frame', index: f.index, t: f.t, x: bytes(f.x), y: bytes(f.y), id: bytes(f.id as Uint32Array) }));
    const rows = Array.from({ length: f.count }, (_, p) => ({ id: (f.id as Uint32Array)[p], x: f.x[p], y: f.y[p] }));
    mapRows.push(packr.pack({ type: 'frame', index: f.index, t: f.t, rows }));
    recordRows.push(recordPackr.pack({ type: 'frame', index: f.index, t: f.t, rows }));
    jsonRows.push(JSON.stringify({ type: 'frame', index: f.index, t: f.t, rows }));
  }
  return { columnar, mapRows, recordRows, jsonRows, structures };
}

/** Copies row objects into typed arrays, checking each value (what a row-wise rig's server must do). */
function rowsInto(rows: { id: unknown; x: unknown; y: unknown }[], x: Float64Array, y: Float64Array, id: Uint32Array): number {
  for (let p = 0; p < rows.length; p++) {
    const row = rows[p];
    const a = row.x;
    const b = row.y;
    const k = row.id;
    if (typeof a !== 'number' || !Number.isFinite(a) || typeof b !== 'number' || !Number.isFinite(b)) throw new Error('bad row');
    if (typeof k !== 'number' || !Number.isInteger(k) || k < 0) throw new Error('bad id');
    x[p] = a;
    y[p] = b;
    id[p] = k;
  }
  return rows.length;
}

export function ingestThroughput(particles = 10_000, runs = 5): BenchFigure[] {
  const frameCount = Math.max(20, Math.round(2_000_000 / particles));
  const m = messages(particles, frameCount);
  const x = new Float64Array(particles);
  const y = new Float64Array(particles);
  const id = new Uint32Array(particles);
  const plain = new Unpackr({ useRecords: false, mapsAsObjects: true });
  const records = new Unpackr({ useRecords: true, structures: m.structures as never });
  const label = `${particles} per frame`;
  const json = measureRate(`JSON rows, JSON.parse + checked copy (baseline), ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const text of m.jsonRows) n += rowsInto((JSON.parse(text) as { rows: never[] }).rows, x, y, id);
    return n;
  }, runs);
  const ceiling = measureRate(`msgpackr columnar, copy into typed arrays allocated once (ceiling), ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const message of m.columnar) {
      const v = plain.unpack(message) as { x: Uint8Array; y: Uint8Array; id: Uint8Array };
      new Uint8Array(x.buffer).set(v.x);
      new Uint8Array(y.buffer).set(v.y);
      new Uint8Array(id.buffer).set(v.id);
      n += v.x.byteLength / 8;
    }
    return n;
  }, runs);
  const fresh = measureRate(`msgpackr columnar, new typed arrays per message, ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const message of m.columnar) {
      const v = plain.unpack(message) as { x: Uint8Array; y: Uint8Array; id: Uint8Array };
      const fx = new Float64Array(Uint8Array.prototype.slice.call(v.x).buffer);
      const fy = new Float64Array(Uint8Array.prototype.slice.call(v.y).buffer);
      const fid = new Uint32Array(Uint8Array.prototype.slice.call(v.id).buffer);
      n += fx.length; if (fy.length !== fid.length) throw new Error("length");
    }
    return n;
  }, runs);
  const buffers = new FrameBuffers();
  const ours = measureRate(`jostle ingest: decodeMessage + FrameBuffers.decode (checked), ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const message of m.columnar) n += buffers.decode(decodeMessage(message, true), 64, 1, 1_000_000).count;
    return n;
  }, runs);
  const maps = measureRate(`msgpackr row-wise maps + checked copy, ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const message of m.mapRows) n += rowsInto((plain.unpack(message) as { rows: never[] }).rows, x, y, id);
    return n;
  }, Math.min(runs, 3));
  const recs = measureRate(`msgpackr row-wise records + checked copy, ${label}`, 'centroids/s', () => {
    let n = 0;
    for (const message of m.recordRows) n += rowsInto((records.unpack(message) as { rows: never[] }).rows, x, y, id);
    return n;
  }, Math.min(runs, 3));
  return [json, ceiling, fresh, ours, recs, maps];
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const figures = ingestThroughput(Number(process.argv[2] ?? 10_000));
  console.log(machineLine());
  console.log(table(figures, figures[0]));
}
