/** How common-mode motion is removed before estimation (see src/pipeline/README.md). */
export type DriftCorrection = 'auto' | 'fitted' | 'per-frame' | 'none';

/**
 * Settings of the one pipeline (offline `analyze` and the live server alike). Units: s, µm, °C.
 * Every limit is here with its default; `resolvePipelineOptions` merges and checks them once.
 */
export interface PipelineOptions {
  /** Nominal frame interval Δt, s. Required. */
  frameInterval: number;
  /** Camera exposure per frame t_E, s (default: the frame interval, continuous illumination). */
  exposure?: number;
  /** Number of tracked axes: 2 (x, y) or 3 (x, y, z). Default: 3 when the first frame has z. */
  dims?: 2 | 3;
  /** Number of MSD lags kept (default 16). */
  lagCount?: number;
  /** Longest MSD lag, in frames (default 128). Memory per track grows with it (a position ring). */
  maxLag?: number;
  /** Lags 1..consecutiveLags are all kept, for the MSD fit (default 10). */
  consecutiveLags?: number;
  /** A track may miss this many frames before it ends (default 2). */
  maxGapFrames?: number;
  /** Groups of tracks for the delete-a-group jackknife (default 20). */
  groups?: number;
  /** Use the jackknife CI once this many tracks have steps (default 40); below it, the model CI. */
  jackknifeMinTracks?: number;
  /** Time-block length for rolling estimates and segments, s (default 1; doubles when blocks run out). */
  blockSeconds?: number;
  /** Most time blocks kept; when exceeded, neighbours merge and the block length doubles (default 4096). */
  maxBlocks?: number;
  /** Rolling window for live estimates, s (default 60). */
  rollingWindowSeconds?: number;
  /** Drift correction (default 'auto'). */
  driftCorrection?: DriftCorrection;
  /** Standardised excess of common-mode motion over diffusion that makes 'auto' choose per-frame (default 4). */
  commonModeExcessZ?: number;
  /** Gate for linking, µm per frame (default: from the current D and σ). */
  maxDisplacement?: number;
  /** Gate before any estimate exists, µm per frame (default 2). */
  initialMaxDisplacement?: number;
  /** Nominal particle radius, µm (enables Stokes-Einstein). */
  radius?: number;
  /** Standard uncertainty of the radius, µm (default 2 % of the radius). */
  radiusSd?: number;
  /** Particle centre height above the coverslip, µm (Faxén parallel correction). */
  height?: number;
  /** Medium spec: 'water', 'glycerol-water:<mass fraction>', 'viscosity:<mPa·s>' (default 'water'). */
  medium?: string;
  /** Reported sample temperature, °C, when no log is given. */
  temperature?: number;
  /** Per-track rows kept in the report (default 2000; the rest are counted). */
  maxTrackTable?: number;
  /** Tracks need this many steps for a per-track D (default 10). */
  minTrackSteps?: number;
  /** Requested relative precision (SE/D) of D, for the `sparse` and `noise` checks (default 0.05). */
  targetPrecision?: number;
  /** Detector settings, by detector name; `false` turns one off. */
  detectors?: Record<string, Record<string, unknown> | false>;
}

/** Options with every default filled in. */
export type ResolvedPipelineOptions = Required<Omit<PipelineOptions, 'dims' | 'maxDisplacement' | 'radius' | 'height' | 'temperature' | 'radiusSd'>> & {
  dims: 2 | 3 | undefined;
  maxDisplacement: number | undefined;
  radius: number | undefined;
  radiusSd: number | undefined;
  height: number | undefined;
  temperature: number | undefined;
};

/** Every pipeline option's name (for checking settings files). */
export const PIPELINE_OPTION_NAMES: readonly string[] = [
  'frameInterval', 'exposure', 'dims', 'lagCount', 'maxLag', 'consecutiveLags', 'maxGapFrames', 'groups',
  'jackknifeMinTracks', 'blockSeconds', 'maxBlocks', 'rollingWindowSeconds', 'driftCorrection', 'commonModeExcessZ',
  'maxDisplacement', 'initialMaxDisplacement', 'radius', 'radiusSd', 'height', 'medium', 'temperature',
  'maxTrackTable', 'minTrackSteps', 'targetPrecision', 'detectors',
];

const POSITIVE = ['frameInterval', 'blockSeconds', 'rollingWindowSeconds', 'initialMaxDisplacement', 'targetPrecision'] as const;
const INTEGER_MIN_1 = ['lagCount', 'maxLag', 'consecutiveLags', 'groups', 'maxBlocks', 'maxTrackTable', 'minTrackSteps'] as const;

/**
 * Merges defaults, coerces numbers and rejects contradictory options with a message naming them.
 * Throws RangeError (code JOSTLE_E_OPTION).
 *
 * @example resolvePipelineOptions({ frameInterval: 0.033 }).lagCount // → 16
 */
export function resolvePipelineOptions(options: PipelineOptions): ResolvedPipelineOptions {
  const merged = {
    exposure: options.frameInterval,
    dims: undefined,
    lagCount: 16,
    maxLag: 128,
    consecutiveLags: 10,
    maxGapFrames: 2,
    groups: 20,
    jackknifeMinTracks: 40,
    blockSeconds: 1,
    maxBlocks: 4096,
    rollingWindowSeconds: 60,
    driftCorrection: 'auto' as DriftCorrection,
    commonModeExcessZ: 4,
    maxDisplacement: undefined,
    initialMaxDisplacement: 2,
    radius: undefined,
    radiusSd: undefined,
    height: undefined,
    medium: 'water',
    temperature: undefined,
    maxTrackTable: 2000,
    minTrackSteps: 10,
    targetPrecision: 0.05,
    detectors: {},
    ...stripUndefined(options),
  } as ResolvedPipelineOptions;
  for (const key of POSITIVE) {
    const value = Number(merged[key]);
    if (!(value > 0) || !Number.isFinite(value)) fail(`pipeline option ${key} must be a positive number`);
    (merged as Record<string, unknown>)[key] = value;
  }
  for (const key of INTEGER_MIN_1) {
    const value = Number(merged[key]);
    if (!Number.isInteger(value) || value < 1) fail(`pipeline option ${key} must be an integer >= 1`);
    (merged as Record<string, unknown>)[key] = value;
  }
  if (!Number.isInteger(merged.maxGapFrames) || merged.maxGapFrames < 0) fail('pipeline option maxGapFrames must be an integer >= 0');
  if (!(merged.exposure >= 0) || merged.exposure > merged.frameInterval * (1 + 1e-9)) {
    fail('pipeline options exposure must be in [0, frameInterval]');
  }
  if (merged.dims !== undefined && merged.dims !== 2 && merged.dims !== 3) fail('pipeline option dims must be 2 or 3');
  if (merged.groups < 2) fail('pipeline option groups must be at least 2');
  if (!['auto', 'fitted', 'per-frame', 'none'].includes(merged.driftCorrection)) {
    fail('pipeline option driftCorrection must be auto, fitted, per-frame or none');
  }
  if (merged.radius !== undefined && !(merged.radius > 0)) fail('pipeline option radius must be positive');
  if (merged.radiusSd !== undefined && !(merged.radiusSd >= 0)) fail('pipeline option radiusSd must be >= 0');
  if (merged.radiusSd !== undefined && merged.radius === undefined) fail('pipeline option radiusSd needs radius');
  if (merged.height !== undefined && merged.radius !== undefined && !(merged.height > merged.radius)) {
    fail('pipeline options height must exceed radius (centre above the wall)');
  }
  if (merged.temperature !== undefined && !Number.isFinite(merged.temperature)) fail('pipeline option temperature must be a number');
  if (merged.maxDisplacement !== undefined && !(merged.maxDisplacement > 0)) fail('pipeline option maxDisplacement must be positive');
  return merged;
}

function stripUndefined<T extends object>(value: T): Partial<T> {
  const out: Partial<T> = {};
  for (const [key, entry] of Object.entries(value)) if (entry !== undefined) (out as Record<string, unknown>)[key] = entry;
  return out;
}

function fail(message: string): never {
  const error = new RangeError(message) as RangeError & { code: string };
  error.code = 'JOSTLE_E_OPTION';
  throw error;
}
