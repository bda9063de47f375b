import { EventEmitter } from 'node:events';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { Packr } from 'msgpackr';
import { VirtualTimeScheduler } from 'rxjs';
import type { WebSocket } from 'ws';
import type { Frame } from '../../src/frame.js';
import { decodeMessage } from '../../server/decodeMessage.js';
import { FrameBuffers } from '../../server/frameBuffers.js';
import { Recorder } from '../../server/recorder.js';
import { RigConnection } from '../../server/rigConnection.js';
import { parseRunMessage, parseTagMessage, parseTemperatureMessage } from '../../server/rigMessageFields.js';
import { RunRegistry } from '../../server/runRegistry.js';
import { ServerError } from '../../server/serverError.js';
import { resolveServerOptions } from '../../server/serverOptions.js';
import { CentroidCsvParser, type CentroidReadSummary } from '../io/centroidCsvParser.js';
import { IoError } from '../io/ioError.js';

/**
 * Generators and properties of the hardening fuzz (server/README.md "Hardening"): shared by the
 * fast tests in `test/hardening/` (few cases) and the soak `tools/soak/hardening.ts` (many).
 * Every property throws (an assertion failure) when it does not hold; fast-check then shrinks.
 */

/** Codes a rejected rig or dashboard message may carry (server/README.md "Error codes"). */
export const MESSAGE_CODES = new Set([
  'JOSTLE_E_DECODE', 'JOSTLE_E_TYPE', 'JOSTLE_E_NO_RUN', 'JOSTLE_E_RUN', 'JOSTLE_E_RUN_OPEN', 'JOSTLE_E_RUN_LIMIT',
  'JOSTLE_E_MEDIUM', 'JOSTLE_E_FRAME', 'JOSTLE_E_NOT_FINITE', 'JOSTLE_E_FRAME_TOO_LARGE', 'JOSTLE_E_FRAME_ORDER',
  'JOSTLE_E_TEMPERATURE', 'JOSTLE_E_TAG', 'JOSTLE_E_ACK',
]);

const packr = new Packr({ useRecords: false });

function fail(text: string): never {
  throw new Error(`property broken: ${text}`);
}

/** Re-throws anything that is not a ServerError with a known code. */
export function expectServerError(error: unknown, allowed: ReadonlySet<string> = MESSAGE_CODES): void {
  if (!(error instanceof ServerError)) fail(`not a ServerError: ${String(error)}`);
  if (!allowed.has(error.code)) fail(`unexpected code ${error.code}`);
  if (typeof error.message !== 'string' || error.message.length === 0) fail('empty reason');
}

// ---------- values ----------

/** Numbers a rig might send by mistake: NaN, ±∞, −0, huge, tiny, negative, fractional. */
export const wildNumber = fc.oneof(
  fc.double(),
  fc.constantFrom(NaN, Infinity, -Infinity, -0, 0, 1e308, -1e308, 5e-324, 2 ** 53, 2 ** 32, -1, 0.5),
  fc.integer(),
);

/** Any JSON-ish value, nested up to a few levels (objects, arrays, strings, numbers, null). */
export const wildValue: fc.Arbitrary<unknown> = fc.letrec((tie) => ({
  value: fc.oneof(
    { depthSize: 'small', withCrossShrink: true },
    wildNumber,
    fc.string({ maxLength: 8 }),
    fc.boolean(),
    fc.constant(null),
    fc.array(tie('value'), { maxLength: 4 }),
    fc.dictionary(fc.string({ maxLength: 4 }), tie('value'), { maxKeys: 3 }),
  ),
})).value;

/** An object nested `depth` levels deep (deeply nested input). */
export function nested(depth: number): unknown {
  let value: unknown = 1;
  for (let i = 0; i < depth; i++) value = i % 2 ? [value] : { a: value };
  return value;
}

const numericArray = fc.oneof(
  fc.array(wildNumber, { maxLength: 12 }),
  fc.array(wildValue, { maxLength: 4 }),
  fc.uint8Array({ maxLength: 40 }),
  fc.float64Array({ maxLength: 8 }),
  fc.constant('1,2,3'),
  wildValue,
);

/** A `frame`-like message whose every field may be wrong, with unknown fields added. */
export const wildFrame = fc.record(
  {
    type: fc.constant('frame'),
    index: fc.oneof(fc.nat(50), wildNumber, wildValue),
    t: fc.oneof(fc.double({ min: 0, max: 100, noNaN: true }), wildNumber, wildValue),
    x: numericArray,
    y: numericArray,
    z: numericArray,
    id: fc.oneof(fc.array(fc.oneof(fc.nat(), wildNumber), { maxLength: 12 }), fc.uint8Array({ maxLength: 40 }), wildValue),
    intensity: numericArray,
    extra: wildValue,
  },
  { requiredKeys: ['type'] },
);

/** A good frame of n centroids with (maybe) one field replaced by a wild value. */
export const nearFrame = fc
  .integer({ min: 0, max: 12 })
  .chain((n) => fc.record({
    index: fc.nat(1000),
    t: fc.double({ min: 0, max: 1e4, noNaN: true }),
    x: fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: n, maxLength: n }),
    y: fc.array(fc.double({ min: -1e6, max: 1e6, noNaN: true }), { minLength: n, maxLength: n }),
    id: fc.array(fc.nat(), { minLength: n, maxLength: n }),
    spoil: fc.option(fc.tuple(fc.constantFrom('index', 't', 'x', 'y', 'z', 'id', 'intensity'), fc.oneof(wildNumber, wildValue, fc.uint8Array({ maxLength: 24 }))), { freq: 2 }),
  }))
  .map(({ spoil, ...frame }) => {
    const message: Record<string, unknown> = { type: 'frame', ...frame };
    if (spoil) message[spoil[0]] = spoil[1];
    return message;
  });

/** Any object with a known or unknown `type`. */
export const wildMessage = fc.record(
  {
    type: fc.oneof(fc.constantFrom('run', 'frame', 'temperature', 'tag', 'end', 'ack', 'accepted', '', 'FRAME'), wildValue),
    run: fc.oneof(fc.constantFrom('a', '..', '.', 'x'.repeat(65), 'ok-1'), wildValue),
    frameInterval: fc.oneof(fc.double({ min: 0.001, max: 1, noNaN: true }), wildNumber, wildValue),
    exposure: wildNumber,
    radius: wildNumber,
    radiusSd: wildNumber,
    temperature: wildNumber,
    medium: fc.oneof(fc.constantFrom('water', 'glycerol-water:0.5', 'viscosity:1.2', 'glycerol-water:2', 'viscosity:-1', 'honey'), wildValue),
    floatBits: fc.oneof(fc.constantFrom(32, 64), wildValue),
    label: fc.oneof(fc.string({ maxLength: 10 }), fc.constant('l'.repeat(201)), wildValue),
    start: wildNumber,
    end: fc.oneof(wildNumber, fc.constant(null)),
    note: fc.oneof(fc.string({ maxLength: 10 }), fc.constant('n'.repeat(2001)), wildValue),
    celsius: wildNumber,
    alert: wildValue,
  },
  { requiredKeys: [] },
);

// ---------- pure properties ----------

/** decodeMessage(bytes) gives a plain object or throws JOSTLE_E_DECODE: never anything else. */
export function checkDecode(bytes: Uint8Array, isBinary: boolean): void {
  try {
    const value = decodeMessage(Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength), isBinary);
    if (value === null || typeof value !== 'object' || Array.isArray(value)) fail('decoded a non-object');
    if (Object.prototype.hasOwnProperty.call(value, '__proto__')) fail('kept a __proto__ key');
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_DECODE']));
  }
}

/** Every strict prefix of a packed message is refused with JOSTLE_E_DECODE (truncated MessagePack). */
export function checkTruncated(message: unknown, cut: number): void {
  const bytes = packr.pack(message);
  const at = Math.min(bytes.length - 1, Math.floor(cut * bytes.length));
  try {
    decodeMessage(bytes.subarray(0, at), true);
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_DECODE']));
    return;
  }
  // a prefix that still decodes must be a whole object of its own (e.g. a fixmap cut after its
  // last key): only possible when the packed value was not a map
  if (typeof message === 'object' && message !== null && !Array.isArray(message) && !ArrayBuffer.isView(message) && at > 0) {
    fail(`a truncated map of ${bytes.length} bytes cut at ${at} decoded`);
  }
}

const buffers = new FrameBuffers();

/** FrameBuffers.decode: a finite frame of equal-length columns within the limit, or a coded refusal. */
export function checkFrameFields(message: Record<string, unknown>, floatBits: 32 | 64, maxCount: number): Frame | undefined {
  let frame: Frame;
  try {
    frame = buffers.decode(message, floatBits, 1, maxCount);
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_FRAME', 'JOSTLE_E_NOT_FINITE', 'JOSTLE_E_FRAME_TOO_LARGE']));
    return undefined;
  }
  if (!Number.isInteger(frame.index) || frame.index < 0) fail('accepted a bad index');
  if (!Number.isFinite(frame.t)) fail('accepted a non-finite t');
  if (!(frame.count <= maxCount)) fail('accepted a frame over the limit');
  for (const column of [frame.x, frame.y, frame.z, frame.intensity]) {
    if (!column) continue;
    for (let i = 0; i < frame.count; i++) if (!Number.isFinite(column[i])) fail('accepted a non-finite value');
  }
  return frame;
}

/** parseRunMessage / parseTagMessage / parseTemperatureMessage: a checked value or a coded refusal. */
export function checkFieldParsers(message: Record<string, unknown>): void {
  try {
    const settings = parseRunMessage(message);
    if (!(settings.pipeline.frameInterval > 0) || !Number.isFinite(settings.pipeline.frameInterval)) fail('accepted a bad frameInterval');
    if (settings.floatBits !== 32 && settings.floatBits !== 64) fail('accepted bad floatBits');
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_RUN', 'JOSTLE_E_MEDIUM']));
  }
  try {
    const tag = parseTagMessage(message);
    if (!Number.isFinite(tag.start) || (tag.end !== null && !(tag.end >= tag.start))) fail('accepted a bad tag time');
    if (typeof tag.label !== 'string' || tag.label.length === 0 || typeof tag.note !== 'string') fail('accepted a bad tag text');
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_TAG']));
  }
  try {
    const reading = parseTemperatureMessage(message);
    if (!Number.isFinite(reading.t) || !Number.isFinite(reading.celsius)) fail('accepted a bad reading');
  } catch (error) {
    expectServerError(error, new Set(['JOSTLE_E_TEMPERATURE']));
  }
}

// ---------- CSV ----------

/** A plausible centroid CSV with bad lines mixed in: header, then rows good and bad. */
export const centroidCsv = fc
  .record({
    header: fc.constantFrom('t,x,y', 'frame,t,x,y,id', 'X,Y,T', '\uFEFFt,x,y,intensity', 'frame,x,y', 'x,y', 'a,b', ''),
    rows: fc.array(
      fc.oneof(
        { weight: 3, arbitrary: fc.tuple(fc.double({ min: -1e3, max: 1e3, noNaN: true }), fc.double({ min: -1e3, max: 1e3, noNaN: true })).map(([x, y]) => ({ good: true, x, y })) },
        { weight: 2, arbitrary: fc.oneof(fc.string({ maxLength: 30 }), fc.constantFrom('NaN,1,2', '1,Infinity', '1e400,2,3', ',,', '#c', '', '"1","2","3"', '-1,2,3', '1,2,3,4,5,6,7,8', '0x10,1,2')).map((text) => ({ good: false, text })) },
      ),
      { maxLength: 40 },
    ),
    lineEnd: fc.constantFrom('\n', '\r\n'),
    cuts: fc.array(fc.nat(), { maxLength: 5 }),
  });

/** Parses `bytes` in the chunks the cut points give; returns the summary or the IoError code. */
export function parseCsvChunks(bytes: Uint8Array, cuts: readonly number[], frameInterval: number | undefined): { summary?: CentroidReadSummary; code?: string; frames: number; centroids: number } {
  let frames = 0;
  let centroids = 0;
  const parser = new CentroidCsvParser(frameInterval === undefined ? {} : { frameInterval, maxLineBytes: 256 }, (frame) => {
    frames++;
    centroids += frame.count;
    for (let i = 0; i < frame.count; i++) if (!Number.isFinite(frame.x[i]) || !Number.isFinite(frame.y[i])) fail('CSV frame holds a non-finite position');
  });
  const points = [...new Set(cuts.map((c) => c % (bytes.length + 1)))].sort((a, b) => a - b);
  try {
    let from = 0;
    for (const at of [...points, bytes.length]) {
      parser.push(bytes.subarray(from, at));
      from = at;
    }
    return { summary: parser.finish(), frames, centroids };
  } catch (error) {
    if (!(error instanceof IoError)) fail(`CSV reader threw ${String(error)}`);
    return { code: error.code, frames, centroids };
  }
}

/**
 * The CSV reader never throws but an IoError; rows = accepted + rejected; every frame is finite;
 * the result does not depend on where the chunks are cut; on a `t,x,y` file every good row is
 * used (bad rows around it do not take it with them).
 */
export function checkCsv(bytes: Uint8Array, cuts: readonly number[], goodRows: number | undefined): void {
  const whole = parseCsvChunks(bytes, [], 0.05);
  const cut = parseCsvChunks(bytes, cuts, 0.05);
  if (whole.code !== cut.code) fail('chunking changed the outcome');
  if (whole.summary) {
    const s = whole.summary;
    if (s.rows !== s.acceptedRows + s.rejectedRows) fail('rows != accepted + rejected');
    if (s.frames !== whole.frames || whole.centroids !== s.acceptedRows) fail('frames or centroids do not match the summary');
    if (JSON.stringify(s) !== JSON.stringify(cut.summary) || cut.centroids !== whole.centroids) fail('chunking changed the summary');
    if (goodRows !== undefined && s.acceptedRows < goodRows) fail(`a good row was lost: ${s.acceptedRows} < ${goodRows}`);
  }
}

/** Builds the bytes of a {@link centroidCsv} case; `goodRows` is known for the `t,x,y` header. */
export function csvBytes(c: { header: string; rows: ({ good: boolean; x: number; y: number } | { good: boolean; text: string })[]; lineEnd: string }): { bytes: Uint8Array; goodRows: number | undefined } {
  let t = 0;
  let good = 0;
  const lines = [c.header];
  for (const row of c.rows) {
    if ('x' in row) {
      t += 0.05;
      good++;
      lines.push(`${t.toFixed(2)},${row.x},${row.y}`);
    } else {
      // a bad row must not carry a later time: keep it from being read as a frame that later
      // good rows would then go backwards from
      lines.push(row.text.replace(/[\d.]/g, (d) => (d === '.' ? '.' : 'q')));
    }
  }
  return { bytes: Buffer.from(lines.join(c.lineEnd) + c.lineEnd, 'utf8'), goodRows: c.header === 't,x,y' ? good : undefined };
}

// ---------- dispatch through the rig connection (in process, fake socket) ----------

/** A fake `ws` socket: the connection reads `message` events and writes with `send`. */
class FakeSocket extends EventEmitter {
  readonly OPEN = 1;
  readyState = 1;
  readonly sent: (Buffer | string)[] = [];
  send(data: Buffer | string): void {
    this.sent.push(data);
  }
  close(): void {
    this.readyState = 3;
    this.emit('close', 1000, Buffer.alloc(0));
  }
}

/** An in-process registry with a recording in a temporary folder and a virtual clock. */
export interface DispatchBench {
  registry: RunRegistry;
  /** Opens a fresh rig connection with `run` accepted; returns its socket. */
  connect(run: string, maxFrame?: number): FakeSocket;
  dispose(): void;
}

/** Creates a {@link DispatchBench} (close it with `dispose`). */
export function dispatchBench(options: { maxParticlesPerFrame?: number; maxRuns?: number } = {}): DispatchBench {
  const data = mkdtempSync(join(tmpdir(), 'jostle-fuzz-'));
  const resolved = resolveServerOptions({ data, log: () => undefined, maxParticlesPerFrame: options.maxParticlesPerFrame ?? 20, maxRuns: options.maxRuns ?? 1_000_000 });
  const recorder = new Recorder(data);
  const registry = new RunRegistry(recorder, resolved, new VirtualTimeScheduler());
  return {
    registry,
    connect(run: string) {
      const socket = new FakeSocket();
      new RigConnection(socket as unknown as WebSocket, registry);
      socket.emit('message', Buffer.from(JSON.stringify({ type: 'run', run, frameInterval: 0.05 })), false);
      const answer = JSON.parse(String(socket.sent.at(-1))) as { type: string };
      if (answer.type !== 'accepted') fail(`run not accepted: ${String(socket.sent.at(-1))}`);
      return socket;
    },
    dispose() {
      registry.dispose();
      recorder.close();
      rmSync(data, { recursive: true, force: true });
    },
  };
}

/** One bad message: how it goes on the wire. */
export interface BadMessage {
  bytes: Buffer;
  isBinary: boolean;
}

/** A frame message to send after `last` (the index of the last good frame), made bad in one way. */
export const badRigMessage: fc.Arbitrary<(last: number, t: number) => BadMessage> = fc.oneof(
  fc.uint8Array({ minLength: 1, maxLength: 64 }).map((bytes) => () => ({ bytes: Buffer.concat([Buffer.from([0xc1]), bytes]), isBinary: true })), // 0xc1: never used in MessagePack
  fc.string({ maxLength: 40 }).map((text) => () => ({ bytes: Buffer.from(`{${text}`), isBinary: false })),
  fc.nat(1000).map((cut) => (last: number, t: number) => {
    const full = packr.pack({ type: 'frame', index: last + 1, t, x: Float64Array.of(1, 2, 3), y: Float64Array.of(4, 5, 6) });
    return { bytes: full.subarray(0, cut % full.length), isBinary: true };
  }),
  fc.constantFrom<(last: number, t: number) => Record<string, unknown>>(
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1, NaN], y: [2, 3] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1, Infinity], y: [2, 3] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1, 2], y: [3] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1], y: [3], z: [1, 2] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: Array.from({ length: 21 }, (_, i) => i), y: Array.from({ length: 21 }, (_, i) => i) }),
    (last, t) => ({ type: 'frame', index: last, t, x: [1], y: [2] }),
    (last, t) => ({ type: 'frame', index: last < 0 ? -1 : Math.max(0, last - 3), t, x: [1], y: [2] }),
    (last, t) => ({ type: 'frame', index: -(last + 2), t, x: [1], y: [2] }),
    (last, t) => ({ type: 'frame', index: last + 1.5, t, x: [1], y: [2] }),
    (last, t) => ({ type: 'frame', index: String(last + 1), t, x: [1], y: [2] }),
    (last) => ({ type: 'frame', index: last + 1, t: 'later', x: [1], y: [2] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: { 0: 1 }, y: [2] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1], y: [2], id: [-1] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [1], y: [2], id: [2 ** 32] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, x: [[1]], y: [2] }),
    (last, t) => ({ type: 'frame', index: last + 1, t, y: [2] }),
    () => ({ type: 'temperature', t: 1, celsius: 'warm' }),
    () => ({ type: 'tag', label: '', start: 1 }),
    () => ({ type: 'tag', label: 'a', start: 2, end: 1 }),
    () => ({ type: 'run', frameInterval: 0.05 }),
    () => ({ type: 'shake' }),
    () => ({ kind: 'frame' }),
    () => ({ type: nested(50) }),
  ).chain((make) => fc.boolean().map((binary) => (last: number, t: number) => {
    const message = make(last, t);
    return binary ? { bytes: packr.pack(message), isBinary: true } : { bytes: Buffer.from(JSON.stringify(message)), isBinary: false };
  })),
  // huge arrays announced in a few bytes: array 32 / map 32 headers claiming 2³² − 1 entries
  fc.constantFrom(
    Buffer.from([0x82, 0xa4, ...Buffer.from('type'), 0xa5, ...Buffer.from('frame'), 0xa1, 0x78, 0xdd, 0xff, 0xff, 0xff, 0xff]),
    Buffer.from([0xdf, 0xff, 0xff, 0xff, 0xff, 0xa1, 0x78]),
    Buffer.from([0xc6, 0xff, 0xff, 0xff, 0xff, 0x00]),
  ).map((bytes) => () => ({ bytes, isBinary: true })),
);

/** A good frame (with unknown fields of any depth: they are ignored) encoded either way. */
export function goodFrame(index: number, t: number, binary: boolean, extra: unknown): BadMessage {
  const message = { type: 'frame', index, t, x: [1 + index * 0.01, 2.5], y: [3, 4 - index * 0.01], id: [1, 2], unknownField: extra };
  if (binary) return { bytes: packr.pack({ ...message, x: Float64Array.from(message.x), y: Float64Array.from(message.y), id: Uint32Array.from(message.id) }), isBinary: true };
  return { bytes: Buffer.from(JSON.stringify(message)), isBinary: false };
}

/** A sequence: each slot a good frame (null) or a bad message, with encodings and unknown fields. */
export const rigSequence = fc.array(
  fc.record({ bad: fc.option(badRigMessage, { freq: 2 }), binary: fc.boolean(), extra: fc.oneof(fc.constant(undefined), wildValue, fc.nat(300).map((d) => nested(d))) }),
  { minLength: 1, maxLength: 30 },
);

/**
 * Sends a sequence through one rig connection and checks: no exception escapes; each bad message
 * gets exactly one `error` with a known code, a reason and its own `seq`; each is counted (server
 * and run); every good frame is taken (frames in the pipeline = good frames sent).
 */
export function checkSequence(bench: DispatchBench, runId: string, slots: readonly { bad: ((last: number, t: number) => BadMessage) | null; binary: boolean; extra: unknown }[]): void {
  const socket = bench.connect(runId);
  const run = bench.registry.get(runId)!;
  const before = { server: bench.registry.counters.rejectedMessages, run: run.counters.rejectedMessages, frames: run.pipeline.counts().frames };
  const sentBefore = socket.sent.length;
  let last = run.lastIndex ?? -1;
  let t = last < 0 ? 0 : (last + 1) * 0.05;
  let good = 0;
  const badSeqs: number[] = [];
  const badWires: string[] = [];
  let seq = 1; // the run message was 1
  try {
    checkSlots();
  } finally {
    socket.emit('message', Buffer.from('{"type":"end"}'), false);
    socket.close();
  }
  function checkSlots(): void {
  for (const slot of slots) {
    seq++;
    let wire: BadMessage;
    if (slot.bad) {
      wire = slot.bad(last, t);
      badSeqs.push(seq);
      badWires.push(wire.isBinary ? `bin ${wire.bytes.subarray(0, 60).toString('hex')}` : wire.bytes.subarray(0, 60).toString());
    } else {
      last++;
      t = last * 0.05;
      good++;
      wire = goodFrame(last, t, slot.binary, slot.extra);
    }
    socket.emit('message', wire.bytes, wire.isBinary);
  }
  const answers = socket.sent.slice(sentBefore).map((d) => (typeof d === 'string' ? JSON.parse(d) : JSON.parse(String(d)))) as { type: string; code: string; reason: string; seq: number }[];
  const errors = answers.filter((a) => a.type === 'error');
  if (errors.length !== badSeqs.length) fail(`${errors.length} errors for ${badSeqs.length} bad messages ${JSON.stringify(badWires)}: ${JSON.stringify(errors)}`);
  errors.forEach((e, i) => {
    if (!MESSAGE_CODES.has(e.code)) fail(`unknown code ${e.code}`);
    if (typeof e.reason !== 'string' || e.reason.length === 0) fail('error without a reason');
    if (e.seq !== badSeqs[i]) fail(`error seq ${e.seq}, expected ${badSeqs[i]}`);
  });
  if (bench.registry.counters.rejectedMessages - before.server !== badSeqs.length) fail('server count of rejections is off');
  if (run.counters.rejectedMessages - before.run !== badSeqs.length) fail('run count of rejections is off');
  if (run.pipeline.counts().frames - before.frames !== good) fail(`good frames lost: ${run.pipeline.counts().frames - before.frames} of ${good}`);
  }
  if (run.state !== 'ended') fail('end not taken after the bad messages');
}
