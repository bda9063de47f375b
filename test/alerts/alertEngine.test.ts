import { describe, expect, it } from 'vitest';
import { AlertEngine } from '../../src/alerts/alertEngine.js';
import type { AlertLevel, Condition } from '../../src/alerts/condition.js';

function condition(key: string, level: AlertLevel | null, t: number): Condition {
  return {
    key,
    kind: 'drift',
    level,
    t,
    message: `test ${key}`,
    statistic: { name: 'z', value: 1, threshold: 1 },
    falseAlarm: {},
    effect: null,
  };
}

describe('AlertEngine', () => {
  describe('#push', () => {
    it('opens one alert per condition key at the time it is first declared', () => {
      const engine = new AlertEngine();
      const changes = engine.push([condition('a', 'warn', 3)]);
      expect(changes).toHaveLength(1);
      expect(changes[0].change).toBe('open');
      expect(changes[0].alert.start).toBe(3);
      engine.push([condition('a', 'warn', 4)]);
      expect(engine.alerts()).toHaveLength(1);
    });
    it('reports a level change of an open alert', () => {
      const engine = new AlertEngine();
      engine.push([condition('a', 'info', 1)]);
      const changes = engine.push([condition('a', 'stop', 2)]);
      expect(changes.map((c) => c.change)).toEqual(['level']);
      expect(engine.worst()).toBe('stop');
    });
    it('keeps the same alert when the condition returns within the hold time', () => {
      const engine = new AlertEngine({ clearHoldSeconds: 5 });
      engine.push([condition('a', 'warn', 1)]);
      engine.push([condition('a', null, 2)]);
      expect(engine.tick(4)).toHaveLength(0);
      engine.push([condition('a', 'warn', 5)]);
      expect(engine.tick(20)).toHaveLength(0);
      expect(engine.alerts()).toHaveLength(1);
    });
  });
  describe('#tick', () => {
    it('closes an alert that stayed clear for the hold time, with end = the time it cleared', () => {
      const engine = new AlertEngine({ clearHoldSeconds: 5 });
      engine.push([condition('a', 'warn', 1)]);
      engine.push([condition('a', null, 10)]);
      const changes = engine.tick(15);
      expect(changes).toHaveLength(1);
      expect(changes[0].alert.end).toBe(10);
    });
  });
  it('rejects a negative hold time', () => {
    expect(() => new AlertEngine({ clearHoldSeconds: -1 })).toThrow(RangeError);
  });
  it('acknowledge(id) marks a known alert and refuses an unknown id', () => {
    const engine = new AlertEngine();
    const [{ alert }] = engine.push([condition('a', 'warn', 1)]);
    expect(engine.acknowledge(alert.id)).toBe(true);
    expect(engine.alerts()[0].detail.acknowledged).toBe(true);
    expect(engine.acknowledge('nope')).toBe(false);
  });
});

describe('AlertEngine level history', () => {
  it('keeps the time of each level change in detail.levels', () => {
    const engine = new AlertEngine();
    engine.push([{ key: 'a', kind: 'drift', level: 'info', t: 1, message: 'm', statistic: { name: 'z', value: 1, threshold: 1 }, falseAlarm: {}, effect: null }]);
    engine.push([{ key: 'a', kind: 'drift', level: 'warn', t: 7, message: 'm', statistic: { name: 'z', value: 1, threshold: 1 }, falseAlarm: {}, effect: null }]);
    expect(engine.alerts()[0].start).toBe(1);
    expect(engine.alerts()[0].detail.levels).toEqual([
      { t: 1, level: 'info' },
      { t: 7, level: 'warn' },
    ]);
  });
});
