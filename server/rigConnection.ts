import type { WebSocket } from 'ws';
import { decodeMessage, encodeMessage, type Encoding } from './decodeMessage.js';
import { FrameBuffers } from './frameBuffers.js';
import type { LiveRun } from './liveRun.js';
import type { AlertMessage, ErrorMessage } from './protocol.js';
import { parseRunMessage, parseTagMessage, parseTemperatureMessage } from './rigMessageFields.js';
import type { RunRegistry } from './runRegistry.js';
import { ServerError } from './serverError.js';

/**
 * One rig's socket: decodes and validates each message, feeds its run, and answers in the
 * encoding of the rig's first message. A rejected message gets `error { code, reason, seq }` and
 * is counted; it never closes the socket or disturbs the run.
 *
 * Frame order: a frame whose index is not above the last accepted one is rejected
 * (`JOSTLE_E_FRAME_ORDER`), except right after a resume, where frames at or below the index
 * already recorded are dropped quietly (counted as `resentFrames`): a reconnecting rig may resend.
 *
 * @example
 * new RigConnection(socket, registry); // listens on the socket
 */
export class RigConnection {
  private encoding: Encoding | undefined;
  private seq = 0;
  private run: LiveRun | undefined;
  private floatBits: 32 | 64 = 64;
  private pixelSize = 1;
  private resumeUpTo = -1;
  private readonly buffers = new FrameBuffers();

  constructor(
    private readonly socket: WebSocket,
    private readonly registry: RunRegistry,
  ) {
    socket.on('message', (data, isBinary) => this.receive(data as Buffer, isBinary));
    socket.on('close', () => {
      if (this.run && this.run.rigSocket === this.feeder) this.run.rigSocket = undefined;
      this.run?.flush();
    });
  }

  /** Whether this socket has opened a run (sent an accepted `run` message). */
  get hasRun(): boolean {
    return this.run !== undefined;
  }

  /** What the run sees of this connection. */
  private readonly feeder = {
    close: (code?: number, reason?: string) => this.socket.close(code, reason),
    sendAlert: (message: AlertMessage) => this.send(message),
  };

  private receive(data: Buffer, isBinary: boolean): void {
    this.seq++;
    this.encoding ??= isBinary ? 'msgpack' : 'json';
    try {
      this.dispatch(decodeMessage(Array.isArray(data) ? Buffer.concat(data) : data, isBinary));
    } catch (error) {
      const code = (error as { code?: string }).code;
      const reason = error instanceof ServerError ? error.message : 'message could not be handled';
      const message: ErrorMessage = { type: 'error', code: code?.startsWith('JOSTLE_E_') ? code : 'JOSTLE_E_INTERNAL', reason, seq: this.seq };
      this.registry.counters.rejectedMessages++;
      if (this.run) this.run.counters.rejectedMessages++;
      if (!(error instanceof ServerError)) this.registry.options.log(`jostle: rig message failed: ${(error as Error)?.message}`);
      this.send(message);
    }
  }

  private dispatch(message: Record<string, unknown>): void {
    switch (message.type) {
      case 'run': {
        if (this.run && this.run.state === 'live' && this.run.rigSocket === this.feeder) throw new ServerError('JOSTLE_E_RUN_OPEN', 'a run is already open on this socket');
        const settings = parseRunMessage(message);
        const { run, resumed } = this.registry.open(settings, this.feeder);
        this.run = run;
        this.floatBits = settings.floatBits;
        this.pixelSize = settings.pixelSize;
        this.resumeUpTo = run.lastIndex ?? -1;
        this.send({ type: 'accepted', run: run.id, lastIndex: run.lastIndex, resumed });
        return;
      }
      case 'frame': {
        const run = this.liveRun();
        const index = message.index;
        if (typeof index === 'number' && Number.isInteger(index) && index >= 0 && run.lastIndex !== null && index <= run.lastIndex) {
          // only a well-formed index can be a resent frame; a negative or fractional one is a bad
          // field (JOSTLE_E_FRAME from the frame check below), never dropped quietly
          if (index <= this.resumeUpTo) {
            run.counters.resentFrames++;
            return;
          }
          throw new ServerError('JOSTLE_E_FRAME_ORDER', 'frame index not increasing');
        }
        const frame = this.buffers.decode(message, this.floatBits, this.pixelSize, this.registry.options.maxParticlesPerFrame);
        run.input({ kind: 'frame', frame });
        return;
      }
      case 'temperature':
        this.liveRun().input({ kind: 'temperature', ...parseTemperatureMessage(message) });
        return;
      case 'tag':
        this.liveRun().input({ kind: 'tag', tag: parseTagMessage(message) });
        return;
      case 'end':
        this.liveRun().input({ kind: 'end' });
        return;
      default:
        throw new ServerError('JOSTLE_E_TYPE', 'message type is not known');
    }
  }

  private liveRun(): LiveRun {
    if (!this.run || this.run.state !== 'live' || this.run.rigSocket !== this.feeder) throw new ServerError('JOSTLE_E_NO_RUN', 'no run is open: send run first');
    return this.run;
  }

  private send(message: object): void {
    if (this.socket.readyState !== this.socket.OPEN) return;
    this.socket.send(encodeMessage(message, this.encoding ?? 'json'));
  }
}
