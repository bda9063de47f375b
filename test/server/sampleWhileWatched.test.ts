import { TestScheduler } from 'rxjs/testing';
import { describe, expect, it } from 'vitest';
import { sampleWhileWatched } from '../../server/sampleWhileWatched.js';

// STYLE.md habit 6: time-based operators are tested with RxJS TestScheduler marble diagrams
// (marble syntax as in the RxJS guide "Testing RxJS Code with Marble Diagrams").

function scheduler(): TestScheduler {
  return new TestScheduler((actual, expected) => expect(actual).toEqual(expected));
}

describe('sampleWhileWatched', () => {
  it('sampleWhileWatched(watchers$, 100) emits the latest value at most once per 100 ms while watched', () => {
    scheduler().run(({ cold, hot, expectObservable }) => {
      const frames = hot('  a 9ms b 9ms c 49ms d 34ms e 104ms f 200ms |');
      const watchers = cold('1', { 1: 1 });
      // a at 0, b at 10, c at 20, d at 70, e at 105, f at 210; sampled at 100, 200, 300
      expectObservable(frames.pipe(sampleWhileWatched(watchers, 100))).toBe('100ms d 99ms e 99ms f');
    });
  });

  it('sampleWhileWatched(watchers$, 100) computes nothing while nobody watches', () => {
    scheduler().run(({ hot, expectObservable }) => {
      const frames = hot('    a 49ms b 99ms c 99ms d 99ms e 99ms f 100ms |');
      const watchers = hot('  0 139ms 1 209ms 0', { 0: 0, 1: 1 });
      // frames at 0, 50, 150, 250, 350, 450; watched from 140 to 350: samples at 240 and 340 only
      expectObservable(frames.pipe(sampleWhileWatched(watchers, 100))).toBe('240ms c 99ms d');
    });
  });

  it('sampleWhileWatched(watchers$, 100) emits nothing in a period with no value', () => {
    scheduler().run(({ hot, cold, expectObservable }) => {
      const frames = hot('5ms a 519ms b 200ms |');
      expectObservable(frames.pipe(sampleWhileWatched(cold('1', { 1: 1 }), 100))).toBe('100ms a 499ms b');
    });
  });

  it('sampleWhileWatched(watchers$, 0) throws RangeError', () => {
    expect(() => sampleWhileWatched(cold0(), 0)).toThrow(RangeError);
  });
});

function cold0() {
  return new TestScheduler(() => undefined).createColdObservable('1', { 1: 1 });
}
