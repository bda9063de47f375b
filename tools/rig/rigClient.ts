import { Packr, Unpackr } from 'msgpackr';
import { WebSocket } from 'ws';
import type { Frame } from '../../src/frame.js';
import type { Tag } from '../../src/tag.js';
import type { AcceptedMessage, AlertMessage, ErrorMessage, RigRunMessage } from '../../server/protocol.js';

/** Options of a rig client. */
export interface RigClientOptions {
  /** Access token (sent as `Authorization: Bearer`). */
  token?: string;
  /** Wire encoding (default `msgpack`, with typed-array bins). */
  encoding?: 'msgpack' | 'json';
  /**
   * How a frame's centroids are laid out: `columns` (default; CONTRACTS §4: one array per field)
   * or `rows` (the server's row-wise extension: `rows: [{ x, y, z?, id?, intensity? }, …]`, one
   * record per particle, as a rig that writes per-particle records sends them).
   */
  layout?: 'columns' | 'rows';
  /** Pause sending while the socket holds more than this, bytes (default 4 MiB). */
  highWaterBytes?: number;
  /** Called for each alert the server sends. */
  onAlert?: (alert: AlertMessage) => void;
  /** Called for each `error` the server sends. */
  onError?: (error: ErrorMessage) => void;
}

const packr = new Packr({ useRecords: false });
const unpackr = new Unpackr({ useRecords: false, mapsAsObjects: true });

/**
 * A rig as the server sees one (CONTRACTS §4): connects to `ws://…/rig`, sends `run`, then
 * frames, readings and tags, and `end`. In MessagePack, a frame's arrays go as typed-array bins
 * (`Float64Array` → little-endian float64 `bin`, `Uint32Array` ids → uint32 `bin`), sliced to
 * `count`; in JSON, as arrays of numbers (with `layout: 'rows'`, as one record per particle in
 * either encoding). Sending waits while the socket is backed up.
 * Used by `jostle replay`, `jostle simulate --url` and the demo.
 *
 * @example
 * const rig = await RigClient.connect('ws://127.0.0.1:7311/rig', { token });
 * const { run } = await rig.open({ type: 'run', frameInterval: 0.05 });
 * await rig.frame({ index: 0, t: 0, count: 1, x: Float64Array.of(1), y: Float64Array.of(2) });
 * await rig.end(); // → resolves when the server has the whole run
 */
export class RigClient {
  readonly errors: ErrorMessage[] = [];
  readonly alerts: AlertMessage[] = [];
  private accepted: ((message: AcceptedMessage) => void) | undefined;
  private readonly encoding: 'msgpack' | 'json';
  private readonly layout: 'columns' | 'rows';
  private readonly highWaterBytes: number;

  private constructor(readonly socket: WebSocket, private readonly options: RigClientOptions) {
    this.encoding = options.encoding ?? 'msgpack';
    this.layout = options.layout ?? 'columns';
    this.highWaterBytes = options.highWaterBytes ?? 4 * 1024 * 1024;
    socket.on('message', (data, isBinary) => {
      const message = (isBinary ? unpackr.unpack(data as Buffer) : JSON.parse(String(data))) as { type: string };
      if (message.type === 'accepted') this.accepted?.(message as AcceptedMessage);
      else if (message.type === 'alert') {
        this.alerts.push(message as AlertMessage);
        options.onAlert?.(message as AlertMessage);
      } else if (message.type === 'error') {
        this.errors.push(message as ErrorMessage);
        options.onError?.(message as ErrorMessage);
      }
    });
  }

  /** Opens the socket (rejects on 401/403 or a refused connection). */
  static connect(url: string, options: RigClientOptions = {}): Promise<RigClient> {
    const socket = new WebSocket(url, { perMessageDeflate: false, headers: options.token ? { authorization: `Bearer ${options.token}` } : {} });
    return new Promise((resolve, reject) => {
      socket.once('open', () => resolve(new RigClient(socket, options)));
      socket.once('unexpected-response', (_request, response) => reject(Object.assign(new Error(`server refused the rig: HTTP ${response.statusCode}`), { code: 'JOSTLE_E_REFUSED', status: response.statusCode })));
      socket.once('error', reject);
    });
  }

  /** Sends `run` and waits for `accepted` (or the first `error`). */
  open(run: RigRunMessage): Promise<AcceptedMessage> {
    return new Promise((resolve, reject) => {
      const errorsBefore = this.errors.length;
      const onError = () => {
        if (this.errors.length > errorsBefore) reject(Object.assign(new Error(this.errors[errorsBefore].reason), { code: this.errors[errorsBefore].code }));
      };
      this.socket.on('message', onError);
      this.accepted = (message) => {
        this.socket.off('message', onError);
        resolve(message);
      };
      this.write(run);
    });
  }

  /** Sends one frame (positions in the run's units, usually µm). */
  async frame(frame: Frame): Promise<void> {
    const n = frame.count;
    const message: Record<string, unknown> = { type: 'frame', index: frame.index, t: frame.t };
    if (this.layout === 'rows') {
      const rows: Record<string, number>[] = new Array(n);
      for (let p = 0; p < n; p++) {
        const row: Record<string, number> = { x: frame.x[p], y: frame.y[p] };
        if (frame.z) row.z = frame.z[p];
        if (frame.id) row.id = frame.id[p];
        if (frame.intensity) row.intensity = frame.intensity[p];
        rows[p] = row;
      }
      message.rows = rows;
      await this.write(message);
      return;
    }
    const put = (name: string, values: Float64Array | Uint32Array | undefined) => {
      if (!values) return;
      const view = values.subarray(0, n);
      message[name] = this.encoding === 'msgpack' ? view : Array.from(view);
    };
    put('x', frame.x);
    put('y', frame.y);
    put('z', frame.z);
    put('id', frame.id);
    put('intensity', frame.intensity);
    await this.write(message);
  }

  /** Sends a temperature reading (°C at t s). */
  temperature(t: number, celsius: number): Promise<void> {
    return this.write({ type: 'temperature', t, celsius });
  }

  /** Sends a tag. */
  tag(tag: Tag): Promise<void> {
    return this.write({ type: 'tag', ...tag });
  }

  /** Sends `end` and waits until everything sent has left the socket. */
  async end(): Promise<void> {
    await this.write({ type: 'end' });
    await this.drained();
  }

  /** Closes the socket and waits for the close. */
  close(): Promise<void> {
    if (this.socket.readyState === WebSocket.CLOSED) return Promise.resolve();
    return new Promise((resolve) => {
      this.socket.once('close', () => resolve());
      this.socket.close(1000);
    });
  }

  /** Sends a raw object in the client's encoding (for tests and tools). */
  async write(message: object): Promise<void> {
    if (this.socket.bufferedAmount > this.highWaterBytes) await this.drained();
    if (this.socket.readyState !== WebSocket.OPEN) throw Object.assign(new Error('rig socket is closed'), { code: 'JOSTLE_E_CLOSED' });
    this.socket.send(this.encoding === 'msgpack' ? packr.pack(message) : JSON.stringify(message));
  }

  private drained(): Promise<void> {
    return new Promise((resolve) => {
      const check = () => {
        if (this.socket.bufferedAmount === 0 || this.socket.readyState !== WebSocket.OPEN) resolve();
        else setTimeout(check, 5);
      };
      check();
    });
  }
}
