import { encodeMessage, type Encoding } from './decodeMessage.js';
import { encodeUpdate } from './encodeUpdate.js';
import type { RunState, ServerToDashboardMessage } from './protocol.js';

/** The part of a `ws` WebSocket a channel uses (a fake in tests). */
export interface SocketLike {
  readonly bufferedAmount: number;
  readonly readyState: number;
  send(data: Buffer | string, callback?: (error?: Error) => void): void;
  close(code?: number, reason?: string): void;
}

/** Limits of one dashboard channel. */
export interface DashboardChannelOptions {
  /** Messages (alerts, run lists) queued before the dashboard is closed as too slow (default 8 × 4). */
  queueLength?: number;
  /** Socket bytes buffered above which the dashboard counts as slow (default 1 MiB). */
  highWaterBytes?: number;
}

const OPEN = 1;

/**
 * One dashboard's outgoing side, guarded so that a slow dashboard never slows the rig or the
 * other dashboards: a message is written only while the socket's `bufferedAmount` is under the
 * high-water mark; otherwise it waits in a bounded queue. Updates are coalesced: at most one
 * update waits, and a newer one replaces it (latest wins) and counts one in `coalesced`, which the
 * next update sent carries. Alerts and snapshots are never coalesced; a dashboard whose queue of
 * those overflows is closed with 1013 (try again later). O(1) per message.
 *
 * @example
 * const channel = new DashboardChannel(socket, 'json', { highWaterBytes: 1 << 20 });
 * channel.update(state) // sent at once, or kept as the one pending update
 */
export class DashboardChannel {
  /** Updates replaced by a newer one before they could be sent. */
  coalesced = 0;
  private readonly queue: (Buffer | string)[] = [];
  private pendingUpdate: RunState | undefined;
  private readonly queueLength: number;
  private readonly highWaterBytes: number;
  private closed = false;

  constructor(
    private readonly socket: SocketLike,
    readonly encoding: Encoding,
    options: DashboardChannelOptions = {},
  ) {
    const merged = { queueLength: 32, highWaterBytes: 1024 * 1024, ...options };
    if (!(Number.isInteger(merged.queueLength) && merged.queueLength >= 1)) throw new RangeError('DashboardChannel requires an integer queueLength >= 1');
    if (!(merged.highWaterBytes > 0)) throw new RangeError('DashboardChannel requires highWaterBytes > 0');
    this.queueLength = merged.queueLength;
    this.highWaterBytes = merged.highWaterBytes;
  }

  /** True while the socket holds more than the high-water mark. */
  get slow(): boolean {
    return this.socket.bufferedAmount >= this.highWaterBytes;
  }

  /** Queues a message that must not be coalesced (snapshot, alert, run list). */
  send(message: ServerToDashboardMessage): void {
    if (this.closed) return;
    if (this.queue.length >= this.queueLength) {
      this.closed = true;
      this.socket.close(1013, 'dashboard too slow');
      return;
    }
    this.queue.push(encodeMessage(message, this.encoding));
    this.flush();
  }

  /** Offers the run's latest state; coalesced with a pending one when the dashboard is slow. */
  update(state: RunState): void {
    if (this.closed) return;
    if (this.pendingUpdate !== undefined) this.coalesced++;
    this.pendingUpdate = state;
    this.flush();
  }

  /** Writes what the socket can take now; called again by each write's completion. */
  flush(): void {
    if (this.closed || this.socket.readyState !== OPEN) return;
    while (!this.slow) {
      const next = this.queue.shift();
      if (next !== undefined) {
        this.write(next);
        continue;
      }
      if (this.pendingUpdate === undefined) return;
      const state = this.pendingUpdate;
      this.pendingUpdate = undefined;
      this.write(encodeUpdate(state, this.encoding, this.coalesced));
    }
  }

  /** Stops sending (the socket closed). */
  dispose(): void {
    this.closed = true;
    this.queue.length = 0;
    this.pendingUpdate = undefined;
  }

  private write(data: Buffer | string): void {
    this.socket.send(data, () => this.flush());
  }
}
