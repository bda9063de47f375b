import { backoffDelay } from './backoffDelay.js';

/** Connection state shown on the page. */
export type LinkState = 'connecting' | 'open' | 'waiting' | 'closed';

/** Options of {@link liveSocket}. */
export interface LiveSocketOptions {
  /** Full ws:// address including `?token=`. */
  url: string;
  onMessage: (message: unknown) => void;
  onState: (state: LinkState, detail: { attempt: number; retryInMs: number | null }) => void;
}

/** A reconnecting socket handle. */
export interface LiveSocket {
  /** Sends one JSON message; false when the link is down or its buffer is backed up (dropped). */
  send(message: object): boolean;
  /** Closes for good (no reconnect). */
  close(): void;
}

/**
 * A WebSocket that reconnects by itself with exponential backoff ({@link backoffDelay}: 0.5 s
 * doubling to 8 s, jittered) whenever the link drops, and reports its state. Messages are JSON
 * text. Browser only.
 *
 * @example
 * const link = liveSocket({ url, onMessage: (m) => store.apply(m), onState: (s) => show(s) });
 * link.send({ type: 'ack', alert: 'drift-1' });
 */
export function liveSocket(o: LiveSocketOptions): LiveSocket {
  let ws: WebSocket | null = null;
  let attempt = 0;
  let stopped = false;
  let timer: ReturnType<typeof setTimeout> | null = null;
  const open = () => {
    o.onState('connecting', { attempt, retryInMs: null });
    const socket = new WebSocket(o.url);
    ws = socket;
    socket.onopen = () => {
      attempt = 0;
      o.onState('open', { attempt, retryInMs: null });
    };
    socket.onmessage = (event) => {
      if (typeof event.data !== 'string') return;
      try {
        o.onMessage(JSON.parse(event.data));
      } catch {
        // a malformed message is skipped; the next update replaces the state anyway
      }
    };
    socket.onclose = () => {
      if (ws !== socket) return;
      ws = null;
      if (stopped) return o.onState('closed', { attempt, retryInMs: null });
      const wait = backoffDelay(attempt, Math.random());
      attempt++;
      o.onState('waiting', { attempt, retryInMs: wait });
      timer = setTimeout(open, wait);
    };
  };
  open();
  return {
    send(message) {
      if (!ws || ws.readyState !== WebSocket.OPEN || ws.bufferedAmount > 1 << 20) return false;
      ws.send(JSON.stringify(message));
      return true;
    },
    close() {
      stopped = true;
      if (timer) clearTimeout(timer);
      ws?.close();
      o.onState('closed', { attempt, retryInMs: null });
    },
  };
}
