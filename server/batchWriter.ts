import { MessageChannel, receiveMessageOnPort, Worker, type MessagePort } from 'node:worker_threads';
import { packBatch } from './batchSql.mjs';
import type { RecordRow } from './recorder.js';

/** What the writer thread reports when writing stopped. */
export interface WriterFailure {
  code: string;
  message: string;
}

/** How long `drain` waits for the writer thread before giving up on it, ms. */
const DRAIN_LIMIT_MS = 60_000;
/** Batches posted and not yet written beyond which `post` waits (back-pressure, as before the thread). */
export const MAX_PENDING_BATCHES = 4;

/**
 * The recording's frame batches written on a worker thread (batchWriterWorker.mjs, its own
 * SQLite connection to the same WAL database), so that the SQLite work of a batch (about a tenth
 * of the live server's time under full load) runs beside the pipeline instead of on its thread.
 * Batches are written in the order posted, one transaction each, as the recorder did on the main
 * thread. `drain()` blocks until every posted batch is written (Atomics.wait on a shared
 * counter), so the recorder calls it before each of its own reads and writes: those then see
 * every frame posted before them, and the two connections never write at once.
 *
 * A storage failure in the thread (disk full, database unwritable) comes back as a message: read
 * at once by `drain()` and by each `post()` (receiveMessageOnPort), or else on the next turn of
 * the event loop; from then on batches are dropped, as the recorder's own writes are.
 *
 * Memory: at most `MAX_PENDING_BATCHES` (4) posted batches wait for the thread; beyond that
 * `post` blocks until one is written, so a slow disk slows the frame path (and, through the
 * sockets, the rig) as the event loop's own writes did, instead of filling memory. A killed
 * process loses the waiting batches as it loses the rows still in the live run's buffer: only
 * committed batches survive, as before.
 *
 * @example
 * const writer = new BatchWriter('/data/jostle.sqlite', (f) => console.log(f.code));
 * writer.post(rows); writer.drain(); // every row of `rows` is committed
 */
export class BatchWriter {
  private readonly worker: Worker;
  private readonly port: MessagePort;
  private readonly done = new Int32Array(new SharedArrayBuffer(4));
  private posted = 0;
  private exited = false;
  private closing = false;
  failure: WriterFailure | undefined;

  constructor(path: string, private readonly onFailure: (failure: WriterFailure) => void) {
    const channel = new MessageChannel();
    this.port = channel.port1;
    this.worker = new Worker(new URL('./batchWriterWorker.mjs', import.meta.url), {
      workerData: { path, done: this.done.buffer, port: channel.port2 },
      transferList: [channel.port2],
    });
    this.worker.unref();
    this.port.unref();
    this.port.on('message', (message: { type: string; code: string; message: string }) => this.received(message));
    this.worker.on('error', (error) => this.received({ type: 'failure', code: 'WRITER_ERROR', message: error.message }));
    this.worker.on('exit', () => {
      this.exited = true;
      if (!this.closing) this.received({ type: 'failure', code: 'WRITER_EXIT', message: 'the recording thread stopped' });
    });
  }

  /** Batches posted and not yet written. */
  get pending(): number {
    return this.posted - Atomics.load(this.done, 0);
  }

  /**
   * Queues one batch: its frame rows' BLOB buffers are moved to the thread, not copied (the rows'
   * BLOBs are unreadable here afterwards). Waits while `MAX_PENDING_BATCHES` are unwritten.
   */
  post(rows: readonly RecordRow[]): void {
    this.poll();
    if (this.failure || rows.length === 0) return;
    if (this.pending >= MAX_PENDING_BATCHES) this.drain(MAX_PENDING_BATCHES - 1);
    if (this.failure) return;
    this.posted++;
    const { message, transfer } = packBatch(rows);
    this.worker.postMessage(message, transfer);
  }

  /** Caps the thread's connection at its current size plus `extraPages` pages (fault tests). */
  limitPages(extraPages: number): void {
    this.posted++;
    this.worker.postMessage({ type: 'limit', extraPages });
    this.drain();
  }

  /** Blocks until at most `left` posted batches are unwritten (default 0: all written), or the thread failed or stopped. */
  drain(left = 0): void {
    const started = Date.now();
    for (;;) {
      const written = Atomics.load(this.done, 0);
      if (written >= this.posted - left || this.exited) break;
      if (Date.now() - started > DRAIN_LIMIT_MS) {
        this.received({ type: 'failure', code: 'WRITER_TIMEOUT', message: `the recording thread wrote nothing for ${DRAIN_LIMIT_MS / 1000} s` });
        break;
      }
      Atomics.wait(this.done, 0, written, 100);
    }
    this.poll();
  }

  /** Writes what is queued, closes the thread's connection and stops it. */
  close(): void {
    if (this.closing) return;
    this.closing = true;
    if (!this.exited) {
      this.posted++;
      this.worker.postMessage({ type: 'close' });
      this.drain();
    }
    this.port.close();
    void this.worker.terminate();
  }

  private poll(): void {
    for (let message = receiveMessageOnPort(this.port); message; message = receiveMessageOnPort(this.port)) {
      this.received(message.message as { type: string; code: string; message: string });
    }
  }

  private received(message: { type: string; code: string; message: string }): void {
    if (message.type !== 'failure' || this.failure) return;
    this.failure = { code: message.code, message: message.message };
    this.onFailure(this.failure);
  }
}
