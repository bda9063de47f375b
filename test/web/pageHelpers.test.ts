import { describe, expect, it } from 'vitest';
import type { Report } from '../../src/report.js';
import { splitToken } from '../../web/src/accessToken.js';
import { splitRemedy, worstOpenLevel } from '../../web/src/alertStrip.js';
import { clumpedPairs, dimerFractionText } from '../../web/src/clumpedPairs.js';
import { frameScheduler } from '../../web/src/frameScheduler.js';
import { shortcutFor } from '../../web/src/shortcutKeys.js';
import { tagMarksOf } from '../../web/src/tagMarks.js';

const key = (k: string, mods: Partial<{ ctrlKey: boolean; altKey: boolean; metaKey: boolean }> = {}) => ({ key: k, ctrlKey: false, altKey: false, metaKey: false, ...mods });

describe('splitToken', () => {
  // CONTRACTS §4: the token travels as ?token=; the page strips it from the visible address
  it('takes ?token= off the address and keeps the rest of the query and the hash', () => {
    expect(splitToken('http://127.0.0.1:7311/?token=abc&run=r1#x')).toEqual({ token: 'abc', cleanUrl: 'http://127.0.0.1:7311/?run=r1#x' });
    expect(splitToken('http://127.0.0.1:7311/?run=r1')).toEqual({ token: null, cleanUrl: 'http://127.0.0.1:7311/?run=r1' });
  });
});

describe('shortcutFor', () => {
  it('maps [ ] . to open segment, close segment and point mark', () => {
    expect([key('['), key(']'), key('.')].map((e) => shortcutFor(e, false))).toEqual(['segment-open', 'segment-close', 'mark']);
  });

  it('ignores keys typed into a text field and chords with Ctrl, Alt or Meta', () => {
    expect(shortcutFor(key('['), true)).toBeNull();
    expect(shortcutFor(key('k', { ctrlKey: true }), false)).toBeNull();
    expect(shortcutFor(key('K'), false)).toBe('ack');
  });
});

describe('worstOpenLevel', () => {
  // CONTRACTS §3: levels info < warn < stop; a closed alert (end set) no longer counts
  it('is the most severe level among open alerts only', () => {
    const a = (level: 'info' | 'warn' | 'stop', end: number | null) => ({ id: level, kind: 'drift', level, start: 0, end, message: '', detail: {} }) as const;
    expect(worstOpenLevel([])).toBe('none');
    expect(worstOpenLevel([a('info', null), a('warn', null)])).toBe('warn');
    expect(worstOpenLevel([a('stop', 5), a('info', null)])).toBe('info');
  });
});

describe('splitRemedy', () => {
  it('separates the finding from the likely cause and remedy', () => {
    const m = 'Field moving at 0.168 µm/s over the last 24.6 s. Likely stage drift: let the stage settle';
    expect(splitRemedy(m)).toEqual({ finding: 'Field moving at 0.168 µm/s over the last 24.6 s', remedy: 'Likely stage drift: let the stage settle' });
    expect(splitRemedy('plain message').remedy).toBe('');
  });
});

describe('clumpedPairs', () => {
  it('collects pairs by track id from the detector and open clumping alerts, each once, smaller id first', () => {
    const report = {
      detectors: { clumping: { pairs: [[7, 3]], persistentPairs: [{ a: 3, b: 7 }], merges: [{ a: 528, b: 4, t: 100 }] } },
      alerts: [
        { id: 'c', kind: 'clumping', level: 'stop', start: 1, end: null, message: '', detail: { pairs: [{ a: 11, b: 32 }] } },
        { id: 'd', kind: 'clumping', level: 'warn', start: 1, end: 9, message: '', detail: { pairs: [{ a: 1, b: 2 }] } },
      ],
    } as unknown as Report;
    expect(clumpedPairs(report)).toEqual([[3, 7], [4, 528], [11, 32]]);
  });
});

describe('dimerFractionText', () => {
  it('gives both dimer-fraction estimates with their 95 % CIs, either alone, or nothing before there is one', () => {
    const with_ = (clumping: Record<string, unknown>) => ({ detectors: { clumping }, alerts: [] }) as unknown as Report;
    expect(dimerFractionText(with_({ dimerFraction: { value: 0.123, ci95: [0.05, 0.21] }, intensityDimerFraction: { value: 0.1, ci95: [0.04, 0.18], tracks: 412 } })))
      .toBe('dimer fraction 0.123 [0.05, 0.21] by slow tracks; 0.1 [0.04, 0.18] by brightness (412 tracks) (95 % CI)');
    expect(dimerFractionText(with_({ dimerFraction: null, intensityDimerFraction: { value: 0.3, ci95: [0.2, 0.4], tracks: 50 } })))
      .toBe('dimer fraction 0.3 [0.2, 0.4] by brightness (50 tracks) (95 % CI)');
    expect(dimerFractionText(with_({ dimerFraction: { value: 0, ci95: [0, 0.02] }, intensityDimerFraction: null }))).toBe('dimer fraction 0 [0, 0.02] by slow tracks (95 % CI)');
    expect(dimerFractionText(with_({ dimerFraction: null, intensityDimerFraction: null }))).toBe('');
    expect(dimerFractionText({ detectors: {}, alerts: [] } as unknown as Report)).toBe('');
  });
});

describe('tagMarksOf', () => {
  it('reads report.tags as segments and point marks, oldest first', () => {
    const report = { tags: [{ label: 'b', start: 9, note: 'x' }, { label: 'a', start: 2, end: 4, note: '' }], segments: [] } as unknown as Report;
    expect(tagMarksOf(report)).toEqual([{ label: 'a', start: 2, end: 4, note: '' }, { label: 'b', start: 9, end: null, note: 'x' }]);
  });
});

describe('frameScheduler', () => {
  it('runs the render once per animation frame however often it is asked', () => {
    const frames: (() => void)[] = [];
    let renders = 0;
    const schedule = frameScheduler(() => renders++, (cb) => frames.push(cb));
    schedule();
    schedule();
    schedule();
    expect(frames.length).toBe(1);
    frames.shift()!();
    expect(renders).toBe(1);
    schedule();
    expect(frames.length).toBe(1);
  });
});
