import fc from 'fast-check';
import { Packr } from 'msgpackr';
import { afterAll, describe, expect, it, vi } from 'vitest';
import {
  centroidCsv, checkCsv, checkDecode, checkFieldParsers, checkFrameFields, checkSequence, checkTruncated, csvBytes,
  dispatchBench, nearFrame, nested, rigSequence, wildFrame, wildMessage, wildValue,
} from '../../tools/soak/fuzzCases.js';

// Property-based fuzzing (fast-check) of everything a rig or a file can hand the monitor.
// Properties (server/README.md "Hardening"): no exception escapes but a coded ServerError /
// IoError; each rejection is answered with `error {code, reason, seq}` and counted; good input
// around bad input is never lost. MessagePack framing per the MessagePack specification
// (msgpack/msgpack spec.md: 0xc1 "never used", bin/array/map 32 headers); CSV per CONTRACTS §2.
// Case counts (≈ 1.1 × 10⁵ per run in this folder with fuzzRoutes.test.ts) are listed by name.

vi.setConfig({ testTimeout: 60_000 }); // many cases each; speed is never asserted
const seed = 20261201; // fixed: a failure is reproducible (fast-check prints the path)
const packr = new Packr({ useRecords: false });

describe('decodeMessage', () => {
  it('decodeMessage(arbitrary bytes) gives an object or JOSTLE_E_DECODE (30 000 cases)', () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 200 }), fc.boolean(), (bytes, isBinary) => checkDecode(bytes, isBinary)), { seed, numRuns: 30_000 });
  });

  it('decodeMessage(arbitrary text) as a text message gives an object or JOSTLE_E_DECODE (10 000 cases)', () => {
    fc.assert(fc.property(fc.oneof(fc.string({ maxLength: 80 }), fc.json()), (text) => checkDecode(Buffer.from(text, 'utf8'), false)), { seed, numRuns: 10_000 });
  });

  it('decodeMessage(packed value) takes any MessagePack value, maps with __proto__ and deep nesting included (10 000 cases)', () => {
    const value = fc.oneof(wildValue, wildMessage, fc.nat(300).map((d) => ({ type: 'frame', deep: nested(d) })), fc.constant(JSON.parse('{"__proto__":{"polluted":1},"type":"end"}')));
    fc.assert(fc.property(value, (v) => checkDecode(packr.pack(v), true)), { seed, numRuns: 10_000 });
    expect(({} as Record<string, unknown>).polluted).toBeUndefined();
  });

  it('decodeMessage(truncated MessagePack map) is JOSTLE_E_DECODE at every cut (10 000 cases)', () => {
    fc.assert(fc.property(fc.oneof(wildFrame, wildMessage), fc.double({ min: 0, max: 1, noNaN: true, maxExcluded: true }), (m, cut) => checkTruncated(m, cut)), { seed, numRuns: 10_000 });
  });

  it('decodeMessage(a header announcing 2³² − 1 entries) is refused without allocating them', () => {
    for (const bytes of [[0xdd, 0xff, 0xff, 0xff, 0xff], [0xdf, 0xff, 0xff, 0xff, 0xff], [0xc6, 0xff, 0xff, 0xff, 0xff, 0x00], [0x81, 0xa1, 0x78, 0xdd, 0xff, 0xff, 0xff, 0xff]]) {
      checkDecode(Uint8Array.from(bytes), true);
    }
    checkDecode(Uint8Array.from([...new Array(100_000).fill(0x91), 0x01]), true); // 100 000 nested MessagePack arrays
    checkDecode(Uint8Array.from([...new Array(50_000).fill([0x81, 0xa1, 0x61]).flat(), 0x01]), true); // 50 000 nested maps
    const deep = '['.repeat(100_000) + ']'.repeat(100_000);
    checkDecode(Buffer.from(deep), false); // deeper than the stack: still a coded refusal
    checkDecode(Buffer.from(`{"a":${deep}}`), false);
  });
});

describe('rig message fields', () => {
  it('FrameBuffers.decode(wild frame) gives a finite frame within maxParticlesPerFrame or a coded refusal (20 000 cases)', () => {
    let accepted = 0;
    fc.assert(fc.property(fc.oneof(wildFrame, nearFrame), fc.constantFrom<32 | 64>(32, 64), fc.integer({ min: 1, max: 10 }), (m, bits, max) => {
      if (checkFrameFields(m, bits, max)) accepted++;
    }), { seed, numRuns: 20_000 });
    expect(accepted).toBeGreaterThan(0); // the generator reaches the accepting side too
  });

  it('parseRunMessage, parseTagMessage, parseTemperatureMessage(wild message) check or refuse with their code (10 000 cases)', () => {
    fc.assert(fc.property(wildMessage, (m) => checkFieldParsers(m as Record<string, unknown>)), { seed, numRuns: 10_000 });
  });
});

describe('RigConnection', () => {
  const bench = dispatchBench({ maxParticlesPerFrame: 20 });
  afterAll(() => bench.dispose());

  it('answers each bad message in a stream with one error {code, reason, seq}, counts it, and loses no good frame around it (400 streams)', () => {
    let k = 0;
    fc.assert(fc.property(rigSequence, (slots) => checkSequence(bench, `fuzz-${k++}`, slots)), { seed, numRuns: 400 });
    expect(bench.registry.counters.rejectedMessages).toBeGreaterThan(1_000);
  });
});

describe('CentroidCsvParser', () => {
  it('reads any bytes without throwing but an IoError, the same whatever the chunking (10 000 cases)', () => {
    fc.assert(fc.property(fc.uint8Array({ maxLength: 300 }), fc.array(fc.nat(), { maxLength: 4 }), (bytes, cuts) => checkCsv(bytes, cuts, undefined)), { seed, numRuns: 10_000 });
  });

  it('keeps every good row of a t,x,y file among bad rows, comments and CRLF, however the file is chunked (5 000 cases)', () => {
    fc.assert(fc.property(centroidCsv, (c) => {
      const { bytes, goodRows } = csvBytes(c);
      checkCsv(bytes, c.cuts, goodRows);
    }), { seed, numRuns: 5_000 });
  });
});
