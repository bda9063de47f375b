import { asyncScheduler, EMPTY, type Observable, type OperatorFunction, type SchedulerLike } from 'rxjs';
import { distinctUntilChanged, map, sampleTime, switchMap } from 'rxjs/operators';

/**
 * Samples a stream at most once per `periodMs`, and only while someone watches: while
 * `watchers$` says 0 the source is ignored (nothing is sampled, so nothing downstream — such as
 * an O(tracks × lags) report — is computed). Composed from `switchMap` and `sampleTime`: each
 * period emits the latest value that arrived in it, none when nothing arrived.
 *
 * @param watchers$ the number of watchers (e.g. dashboards of a run), as it changes
 * @param periodMs sampling period, ms (100 for ≤ 10 Hz)
 * @param scheduler time source (TestScheduler in tests)
 * @example
 * frames$.pipe(sampleWhileWatched(dashboards$, 100)) // → the latest frame every 100 ms while watched
 */
export function sampleWhileWatched<T>(watchers$: Observable<number>, periodMs: number, scheduler: SchedulerLike = asyncScheduler): OperatorFunction<T, T> {
  if (!(periodMs > 0)) throw new RangeError('sampleWhileWatched requires periodMs > 0');
  return (source: Observable<T>) =>
    watchers$.pipe(
      map((n) => n > 0),
      distinctUntilChanged(),
      switchMap((watched) => (watched ? source.pipe(sampleTime(periodMs, scheduler)) : EMPTY)),
    );
}
