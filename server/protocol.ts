import type { AlertLevel } from '../src/alerts/condition.js';
import type { Alert, Report } from '../src/report.js';

/**
 * The live protocol of CONTRACTS §4 as TypeScript types: what a rig sends, what the server
 * answers, and what a dashboard receives. Field units: times s (data clock), positions µm,
 * temperatures °C, diffusion coefficients µm²/s. The dashboard (web/) imports these types.
 *
 * @example
 * const hello: RigRunMessage = { type: 'run', run: 'bench-a.0412', frameInterval: 0.05, radius: 0.5 };
 */
export type ProtocolVersion = 1;

/** The `run` message: first message from a rig (CONTRACTS §4). All optional but `frameInterval`. */
export interface RigRunMessage {
  type: 'run';
  /** Run id: 1–64 characters of `A-Za-z0-9._-` (not `.` or `..`); generated when absent. */
  run?: string;
  /** Size of one position unit, µm (default 1: positions already in µm). Applied to x, y and z. */
  pixelSize?: number;
  /** Frame interval, s (required, > 0). */
  frameInterval: number;
  /** Exposure, s (0 ≤ exposure ≤ frameInterval; default the frame interval). */
  exposure?: number;
  /** Nominal particle radius, µm. */
  radius?: number;
  /** Standard uncertainty of the radius, µm. */
  radiusSd?: number;
  /** Particle centre above the coverslip, µm. */
  height?: number;
  /** `water`, `glycerol-water:<mass fraction>` or `viscosity:<mPa·s>`. */
  medium?: string;
  /** Reported sample temperature, °C. */
  temperature?: number;
  /** Width of float `bin` payloads: 64 (default) or 32. */
  floatBits?: 32 | 64;
  /** Free text shown in the run list. */
  label?: string;
}

/** A numeric array as sent: a plain array, or (MessagePack only) a little-endian `bin`. */
export type WireNumbers = number[] | Uint8Array;

/** The `frame` message: one camera frame (CONTRACTS §4). */
export interface RigFrameMessage {
  type: 'frame';
  /** Integer frame index, increasing. */
  index: number;
  /** Frame time, s. */
  t: number;
  x: WireNumbers;
  y: WireNumbers;
  z?: WireNumbers;
  /** Track ids (uint32 in a bin). */
  id?: WireNumbers;
  intensity?: WireNumbers;
}

/** A temperature reading (°C at time t s). */
export interface RigTemperatureMessage {
  type: 'temperature';
  t: number;
  celsius: number;
}

/** A tag, from the rig or a dashboard: a segment with `end`, or a point mark without. */
export interface TagMessage {
  type: 'tag';
  label: string;
  start: number;
  end?: number | null;
  note?: string;
}

/** End of run (a later `run` with the same id reopens it). */
export interface RigEndMessage {
  type: 'end';
}

/** Any message from a rig. */
export type RigMessage = RigRunMessage | RigFrameMessage | RigTemperatureMessage | TagMessage | RigEndMessage;

/**
 * Answer to `run`. `lastIndex` is the highest frame index already recorded for this run (null
 * for a new run): a resuming rig may start after it; frames at or below it are dropped.
 */
export interface AcceptedMessage {
  type: 'accepted';
  run: string;
  lastIndex: number | null;
  resumed: boolean;
}

/** An alert as in a report, plus its run: sent when it opens, changes level and closes. */
export interface AlertMessage extends Alert {
  type: 'alert';
  run: string;
  change: 'open' | 'level' | 'close';
}

/** A rejected message: `seq` is that message's 1-based count on the socket. */
export interface ErrorMessage {
  type: 'error';
  code: string;
  reason: string;
  seq: number;
}

/** Any message from the server to a rig. */
export type ServerToRigMessage = AcceptedMessage | AlertMessage | ErrorMessage;

/** Live counters of one run, shown by dashboards. */
export interface RunCounters {
  /** Frames accepted by the pipeline. */
  frames: number;
  /** Centroids in accepted frames. */
  centroids: number;
  /** Accepted frames per second of wall clock, over the last ~2 s. */
  framesPerSecond: number;
  /** Centroids in the latest frame. */
  particles: number;
  /** Tracks formed so far. */
  tracks: number;
  /** Rig messages rejected with `error` (all sockets of this run). */
  rejectedMessages: number;
  /** Frames dropped because their index was already seen (resume). */
  resentFrames: number;
  /** Dashboard updates coalesced away (summed over this run's dashboards). */
  droppedUpdates: number;
  /** Bytes recorded for this run (frame rows). */
  recordedBytes: number;
  /** False once the quota stopped the recording. */
  recording: boolean;
}

/** Chart history kept by the server on top of the report (columnar, time ascending). */
export interface RunHistory {
  /** Summary times, s (data clock). */
  t: number[];
  /** Reported temperature at each summary, °C (null without one). */
  reportedCelsius: (number | null)[];
  /** Implied temperature and its 95 % CI at each summary, °C (null when not available). */
  impliedCelsius: (number | null)[];
  impliedLow: (number | null)[];
  impliedHigh: (number | null)[];
  /** Run-so-far drift velocity at each summary, µm/s (null before one is known). */
  driftVx: (number | null)[];
  driftVy: (number | null)[];
  /**
   * Drift path: the drift velocity integrated over the summary times, µm (starts at 0). A
   * smoothed picture of where the stage went, not a per-frame track.
   */
  driftX: number[];
  driftY: number[];
}

/** Latest particle positions and short trails (the previous frames' positions), µm. */
export interface RunPositions {
  /** Frame time of the newest kept frame, s. */
  t: number | null;
  /**
   * Newest first: `frames[0]` is the latest kept frame; each holds x, y and ids (when given). Kept
   * frames are at least the server's `trailSpacingMs` apart in data time (default 50 ms), so at
   * fast frame rates `frames[0]` may be up to that much older than the newest frame.
   */
  frames: { t: number; x: number[]; y: number[]; id: number[] | null }[];
}

/** The run's whole current state: what a dashboard gets on connect and in each update. */
export interface RunState {
  run: string;
  label: string;
  state: 'live' | 'ended';
  /** The report of CONTRACTS §3 (it carries `series.diffusion` for D over time with CI). */
  report: Report;
  history: RunHistory;
  positions: RunPositions;
  counters: RunCounters;
  /**
   * Set (true) on the updates of a live run: `report.tracks` is then empty, the per-track table
   * being left out of the frequent updates (the dashboard does not draw it, and it is most of the
   * message). The snapshot, `GET /api/runs/<id>/report` and an ended run's updates carry it.
   */
  tracksOmitted?: true;
}

/** First message to a dashboard of one run. */
export interface SnapshotMessage extends RunState {
  type: 'snapshot';
}

/** Later state of the run (at most 10 a second; a slow dashboard gets the latest only). */
export interface UpdateMessage extends RunState {
  type: 'update';
  /** Updates this dashboard missed because its queue was full (coalesced, latest won). */
  coalesced: number;
}

/** One row of the run list (`GET /api/runs` and the `runs` message). */
export interface RunListEntry {
  id: string;
  label: string;
  state: 'live' | 'ended';
  /** ISO 8601 wall-clock time the run was first opened. */
  started: string;
  frames: number;
  worst: AlertLevel | null;
}

/** The run list, to a dashboard connected without `run` (on connect and on each change). */
export interface RunsMessage {
  type: 'runs';
  runs: RunListEntry[];
}

/** From a dashboard: acknowledge an alert by id. */
export interface AckMessage {
  type: 'ack';
  alert: string;
}

/** Any message from the server to a dashboard. */
export type ServerToDashboardMessage = SnapshotMessage | UpdateMessage | AlertMessage | RunsMessage | ErrorMessage;

/** Any message from a dashboard. */
export type DashboardMessage = TagMessage | AckMessage;
