/**
 * Reduction of one Scan to chi(k): the pipeline stage `reduce`.
 *
 * Steps, each with its settings reported in the result:
 * 1. glitches: flagged energies removed, single-point spikes optionally detected (deglitch.ts);
 * 2. energy calibration from the reference channel, when asked (calibrate.ts);
 * 3. E0: given, or the maximum of the smoothed derivative (edge.ts); the smoothing width defaults
 *    to half the core-level width of the edge (xraylib 4.0.0, src/elements/table.ts), since the
 *    core-hole lifetime already broadens every edge feature by that much, or 0.5 eV when unknown;
 * 4. pre-edge line, post-edge polynomial, edge step, normalised and detrended mu (edge.ts);
 * 5. normalised mu interpolated onto k = 0, 0.05, ... 1/Å with k = sqrt(0.2624683 (E - E0))
 *    (CODATA 2018, src/core/constants.ts), piecewise cubic (interpolate.ts);
 * 6. background spline minimising the low-R transform (Newville et al., Phys. Rev. B 47, 14126
 *    (1993); background.ts), chi = normalised mu - background;
 * 7. noise from the high-R part of the transform (noise.ts).
 */
import { K2_PER_EV } from '../core/constants';
import { InputError } from '../core/errors';
import { makeProvenance } from '../core/provenance';
import { elementBySymbol } from '../elements/index';
import type { Scan } from '../read/spectrum/scan';
import { DEFAULT_BACKGROUND, fitBackground, type BackgroundSettings } from './background';
import { calibrateScan } from './calibrate';
import { CHI_K_PER_INVERSE_A, CHI_K_STEP, makeChi, type Chi } from './chi';
import { DEFAULT_GLITCHES, deglitchScan, type GlitchSettings } from './deglitch';
import { DEFAULT_NORMALISATION, findE0, normalise, type E0Report, type NormalisationSettings } from './edge';
import { interpolateCubic } from './interpolate';
import { evaluateSpline } from './bspline';
import { DEFAULT_NOISE, estimateNoise, type NoiseSettings } from './noise';

/** Every setting of a reduction, defaults filled in. */
export interface ReductionSettings {
  /** Given E0 in eV, or null to find it. */
  e0: number | null;
  /** Derivative smoothing for the E0 search, eV; null: half the core-level width (or 0.5 eV). */
  e0SmoothingEv: number | null;
  normalisation: NormalisationSettings;
  background: BackgroundSettings;
  /** Requested end of the chi(k) grid, 1/Å; null: as far as the data go. */
  kMax: number | null;
  noise: NoiseSettings;
  glitches: GlitchSettings;
  /** Calibrate the energy on the reference channel first; default false. */
  calibrate: boolean;
}

/** Options: any subset of the settings. */
export interface ReductionOptions {
  e0?: number | null;
  e0SmoothingEv?: number | null;
  normalisation?: Partial<NormalisationSettings>;
  background?: Partial<BackgroundSettings>;
  kMax?: number | null;
  noise?: Partial<NoiseSettings>;
  glitches?: Partial<GlitchSettings>;
  calibrate?: boolean;
  /**
   * A theoretical chi(k) on the reduction's k grid (k_i = i / 20 1/Å, from 0): the background then
   * makes the low-R transform of chi match that of this standard instead of zero (Newville et al.
   * 1993), so the tail of a short first shell below R_cut is not taken into the background.
   */
  standard?: Float64Array | null;
}

/**
 * Short pre-edges. The default pre-edge range (E0 -150 to -30 eV) needs a scan that starts at
 * least 30 eV below the edge; many scans start closer. The rising edge is a step broadened by the
 * core-hole lifetime, a Lorentzian of full width Gamma (xraylib 4.0.0 widths in
 * src/elements/table.ts), whose arctangent tail still holds (1/pi) Gamma / (2 dE) of the step at
 * dE below E0: about 4 % for Mn K (Gamma 1.1 eV) at 5 eV, 8 % at 2 Gamma for any edge. So the
 * line may come no closer to E0 than max(5 eV, 2 Gamma) (PRE_EDGE_GAP_EV, the gap), and it
 * needs at least PRE_EDGE_MIN_WIDTH_EV of data and PRE_EDGE_MIN_POINTS points to be a line with
 * a residual at all. When the default range holds fewer points, the line is fitted from the scan's
 * first point to the gap, with a warning that names the range, the points and the order; a scan
 * that starts less than gap + width below E0 (10 eV for a 3d K edge, 16 eV for Au L3) has no
 * pre-edge and is refused. A line fitted over 10-20 eV has a poorly known slope: the edge step
 * (and with it S0^2) may be off by a few per cent, chi(k) hardly (the slope error is smooth and
 * goes into the background spline). The thresholds are common practice, no source.
 */
export const PRE_EDGE_GAP_EV = 5;
export const PRE_EDGE_MIN_WIDTH_EV = 5;
export const PRE_EDGE_MIN_POINTS = 5;

/**
 * Short post-edges (near-edge scans that end before E0 + 150 eV, the default start of the
 * post-edge polynomial): the polynomial is fitted from E0 + 30 eV, past the strongest near-edge
 * features, to the end of the scan, at most a line (a quadratic over a few tens of eV follows the
 * first oscillation), with a warning naming the range, the points and the order. Common practice,
 * no source.
 */
export const POST_EDGE_SHORT_START_EV = 30;

/** Closest approach of a fallback pre-edge line to E0, eV: max(5 eV, 2 core-hole widths). */
export function preEdgeGap(coreHoleWidthEv: number | null): number {
  return Math.max(PRE_EDGE_GAP_EV, 2 * (coreHoleWidthEv ?? 0));
}

function pointsBetween(energy: Float64Array, lo: number, hi: number): number {
  let n = 0;
  for (let i = 0; i < energy.length; i++) if (energy[i] >= lo && energy[i] <= hi) n++;
  return n;
}

/** The standard padded with zeros (or cut) to the k grid's length; null when none is given. */
function standardOnGrid(standard: Float64Array | null | undefined, points: number): Float64Array | null {
  if (!standard) return null;
  const out = new Float64Array(points);
  out.set(standard.subarray(0, Math.min(points, standard.length)));
  return out;
}

/** Fewest chi(k) grid points above E0 a reduction accepts (2 1/Å of data). */
export const MIN_K_POINTS = 40;

/** Fill in defaults and check ranges. @throws InputError naming the setting. */
export function resolveReductionSettings(options: ReductionOptions = {}): ReductionSettings {
  const s: ReductionSettings = {
    e0: options.e0 ?? null,
    e0SmoothingEv: options.e0SmoothingEv ?? null,
    normalisation: { ...DEFAULT_NORMALISATION, ...options.normalisation },
    background: { ...DEFAULT_BACKGROUND, ...options.background },
    kMax: options.kMax ?? null,
    noise: { ...DEFAULT_NOISE, ...options.noise },
    glitches: { ...DEFAULT_GLITCHES, ...options.glitches, energies: [...(options.glitches?.energies ?? DEFAULT_GLITCHES.energies)] },
    calibrate: options.calibrate ?? false,
  };
  const bad = (key: string, why: string) => new InputError(why, { key });
  const n = s.normalisation;
  if (!(n.preEdge[0] < n.preEdge[1]) || !(n.preEdge[1] <= 0)) throw bad('preEdge', `the pre-edge range must increase and end at or below E0, got [${n.preEdge.join(', ')}] eV`);
  if (!(n.postEdge[0] > 0) || (n.postEdge[1] !== null && !(n.postEdge[1] > n.postEdge[0]))) throw bad('postEdge', `the post-edge range must start above E0 and increase, got [${n.postEdge.join(', ')}] eV`);
  if (![0, 1, 2].includes(n.preEdgeOrder)) throw bad('preEdgeOrder', `the pre-edge order must be 0, 1 or 2, got ${n.preEdgeOrder}`);
  if (![0, 1, 2, 3].includes(n.postEdgeOrder)) throw bad('postEdgeOrder', `the post-edge order must be 0-3, got ${n.postEdgeOrder}`);
  const b = s.background;
  if (!(b.cutoffR > 0 && b.cutoffR < 5)) throw bad('bkgCutoff', `the background cutoff must lie between 0 and 5 Å, got ${b.cutoffR}`);
  if (!(b.kWeighting >= 0 && b.kWeighting <= 4)) throw bad('background.kWeighting', `the k-weight must lie between 0 and 4, got ${b.kWeighting}`);
  if (!(b.kMin >= 0)) throw bad('background.kMin', `kMin must be at least 0, got ${b.kMin}`);
  if (b.kMax !== null && !(b.kMax > b.kMin + 1)) throw bad('background.kMax', `kMax must exceed kMin by at least 1 1/Å`);
  if (!(b.endWeightLow >= 0) || !(b.endWeightHigh >= 0)) throw bad('endWeights', 'end weights must be non-negative');
  if (!(Number.isInteger(b.endWeightPoints) && b.endWeightPoints >= 1)) throw bad('endWeightPoints', 'endWeightPoints must be a whole number >= 1');
  if (!(b.regularisation >= 0)) throw bad('regularisation', 'the regularisation must be non-negative');
  if (b.knotSpacing !== null && !(b.knotSpacing > 0)) throw bad('knotSpacing', 'the knot spacing must be positive');
  if (s.kMax !== null && !(s.kMax > 2)) throw bad('kMax', `kMax must exceed 2 1/Å, got ${s.kMax}`);
  if (s.e0 !== null && !Number.isFinite(s.e0)) throw bad('e0', 'e0 must be a finite energy in eV');
  if (s.e0SmoothingEv !== null && !(s.e0SmoothingEv >= 0)) throw bad('e0SmoothingEv', 'the smoothing must be non-negative');
  if (!(s.noise.rRange[0] < s.noise.rRange[1]) || s.noise.rRange[1] > 31) throw bad('noise.rRange', 'the noise R range must increase and end below 31 Å');
  if (!(s.glitches.threshold > 0)) throw bad('glitches.threshold', 'the glitch threshold must be positive');
  return s;
}

/** Result of a reduction: the Chi and the scan as it was after deglitching and calibration. */
export interface Reduction {
  chi: Chi;
  scan: Scan;
}

function tabulatedEdge(scan: Scan): { energy: number; width: number | null } | null {
  if (!scan.info.element || !scan.info.edge) return null;
  const e = elementBySymbol(scan.info.element).edges[scan.info.edge];
  return e ? { energy: e.energy, width: e.width } : null;
}

/**
 * Reduce a scan to chi(k).
 * @throws InputError (one line, naming the file and the setting) for scans that stop before the
 *   edge, start after it, hold too few points above it for the k range, or give no edge step.
 */
export function reduceScan(input: Scan, options: ReductionOptions = {}): Reduction {
  const settings = resolveReductionSettings(options);
  const file = input.info.file ?? undefined;
  const warnings = [...input.info.warnings];
  // the reduction's own warnings, also kept apart in the record for commands that reduce on the way
  const reductionWarnings: string[] = [];
  const warn = (text: string) => {
    warnings.push(text);
    reductionWarnings.push(text);
  };

  const { scan: clean, removed } = deglitchScan(input, settings.glitches);
  let scan = clean;
  let calibration: Record<string, unknown> | null = null;
  if (settings.calibrate) {
    const c = calibrateScan(scan);
    scan = c.scan;
    calibration = { shiftEv: c.shiftEv, referenceE0: c.referenceE0, tabulatedEdge: c.tabulatedEdge, source: c.source };
  }
  const { energy, mu } = scan;
  const first = energy[0];
  const last = energy[energy.length - 1];
  const table = tabulatedEdge(scan);

  // ---- E0
  let e0Report: E0Report;
  const smoothing = settings.e0SmoothingEv ?? (table?.width ? table.width / 2 : 0.5);
  if (settings.e0 !== null) {
    if (settings.e0 <= first || settings.e0 >= last) throw new InputError(`the given E0 ${settings.e0} eV lies outside the scan (${first}-${last} eV)`, { file, key: 'e0' });
    e0Report = { value: settings.e0, method: 'given', smoothingEv: 0, derivative: NaN };
  } else {
    if (table && last < table.energy + 20) {
      throw new InputError(`the scan ends at ${last} eV, before the ${scan.info.element} ${scan.info.edge} edge at ${table.energy} eV (xraylib 4.0.0)`, { file });
    }
    if (table && first > table.energy - PRE_EDGE_MIN_WIDTH_EV) {
      throw new InputError(`the scan starts at ${first} eV, after (or within ${PRE_EDGE_MIN_WIDTH_EV} eV of) the ${scan.info.element} ${scan.info.edge} edge at ${table.energy} eV (xraylib 4.0.0): no pre-edge`, { file });
    }
    e0Report = findE0(energy, mu, { smoothingEv: smoothing });
  }
  const e0 = e0Report.value;
  // ---- pre-edge range (see PRE_EDGE_GAP_EV)
  let normalisation = settings.normalisation;
  let shortPreEdge: { defaultRange: [number, number]; gapEv: number } | null = null;
  {
    const gap = preEdgeGap(table?.width ?? null);
    const needed = gap + PRE_EDGE_MIN_WIDTH_EV;
    if (e0 - first < needed) {
      throw new InputError(`the scan starts at ${first} eV, only ${(e0 - first).toFixed(1)} eV below E0 = ${e0.toFixed(2)} eV: no pre-edge to fit (a line needs at least ${PRE_EDGE_MIN_WIDTH_EV} eV of data ending ${gap.toFixed(1)} eV below E0, so the scan must start ${needed.toFixed(1)} eV below it)`, { file, key: 'e0' });
    }
    const requested = normalisation.preEdge;
    if (options.normalisation?.preEdge === undefined && pointsBetween(energy, e0 + requested[0], e0 + requested[1]) < PRE_EDGE_MIN_POINTS) {
      // from the first measured point (the rounding keeps it inside the range) to the gap
      const range: [number, number] = [Math.floor((first - e0) * 100) / 100, -Number(gap.toFixed(2))];
      const held = pointsBetween(energy, e0 + range[0], e0 + range[1]);
      if (held < PRE_EDGE_MIN_POINTS) {
        throw new InputError(`the scan starts only ${(e0 - first).toFixed(1)} eV below E0 = ${e0.toFixed(2)} eV and holds ${held} points between E0 ${range[0].toFixed(1)} and ${range[1].toFixed(1)} eV: no pre-edge to fit (at least ${PRE_EDGE_MIN_POINTS} points needed)`, { file, key: 'preEdge' });
      }
      normalisation = { ...normalisation, preEdge: range };
      shortPreEdge = { defaultRange: requested, gapEv: gap };
      warn(`${file ?? 'scan'}: short pre-edge: the scan starts ${(e0 - first).toFixed(1)} eV below E0 = ${e0.toFixed(2)} eV, so the pre-edge line (order ${normalisation.preEdgeOrder}) was fitted over E0 ${range[0].toFixed(1)} to ${range[1].toFixed(1)} eV (${held} points) instead of ${requested[0]} to ${requested[1]} eV; the edge step and S0^2 may be off by a few per cent`);
    }
  }
  if (table && Math.abs(e0 - table.energy) > 20) {
    warn(`${file ?? 'scan'}: E0 = ${e0.toFixed(2)} eV is ${(e0 - table.energy).toFixed(1)} eV from the tabulated ${scan.info.element} ${scan.info.edge} edge (${table.energy} eV, xraylib 4.0.0); check the energy calibration and the element`);
  }

  // ---- k range available
  const kData = Math.sqrt(K2_PER_EV * Math.max(last - e0, 0));
  const kEnd = settings.kMax ?? kData;
  if (settings.kMax !== null && settings.kMax > kData + 1e-9) {
    throw new InputError(`too few points above the edge: the scan reaches k = ${kData.toFixed(2)} 1/Å (${last} eV), short of the requested kMax = ${settings.kMax} 1/Å`, { file, key: 'kMax' });
  }
  const points = Math.floor(kEnd / CHI_K_STEP + 1e-9) + 1;
  if (points < MIN_K_POINTS) {
    throw new InputError(`too few points above the edge: the scan reaches only k = ${kData.toFixed(2)} 1/Å (${(last - e0).toFixed(1)} eV above E0 = ${e0.toFixed(2)} eV); at least ${((MIN_K_POINTS - 1) * CHI_K_STEP).toFixed(2)} 1/Å needed`, { file, key: 'kMax' });
  }
  let above = 0;
  for (let i = 0; i < energy.length; i++) if (energy[i] > e0) above++;
  if (above < 12) throw new InputError(`too few points above the edge: ${above} measured points above E0 = ${e0.toFixed(2)} eV (at least 12 needed)`, { file });

  // ---- post-edge range (see POST_EDGE_SHORT_START_EV)
  if (options.normalisation?.postEdge === undefined && options.normalisation?.postEdgeOrder === undefined) {
    const requested = normalisation.postEdge;
    const end = requested[1] ?? last - e0;
    if (pointsBetween(energy, e0 + requested[0], e0 + end) < PRE_EDGE_MIN_POINTS && last - e0 > POST_EDGE_SHORT_START_EV) {
      const range: [number, number | null] = [POST_EDGE_SHORT_START_EV, null];
      const held = pointsBetween(energy, e0 + POST_EDGE_SHORT_START_EV, last);
      const order = Math.min(normalisation.postEdgeOrder, 1);
      if (held >= PRE_EDGE_MIN_POINTS) {
        normalisation = { ...normalisation, postEdge: range, postEdgeOrder: order };
        warn(`${file ?? 'scan'}: short post-edge: the scan ends ${(last - e0).toFixed(1)} eV above E0, so the post-edge polynomial (order ${order}) was fitted over E0 +${POST_EDGE_SHORT_START_EV} to +${(last - e0).toFixed(1)} eV (${held} points) instead of +${requested[0]} eV to ${requested[1] ?? 'the end'}; near-edge data: chi(k) ends at k = ${Math.sqrt(K2_PER_EV * (last - e0)).toFixed(2)} 1/Å`);
      }
    }
  }

  // ---- normalisation
  const firstNorm = normalise(energy, mu, e0, normalisation, file);

  // ---- k grid and background
  const k = new Float64Array(points);
  const eOfK = new Float64Array(points);
  for (let i = 0; i < points; i++) {
    k[i] = i / CHI_K_PER_INVERSE_A; // i / 20: the double nearest to i * 0.05
    eOfK[i] = e0 + (k[i] * k[i]) / K2_PER_EV;
  }
  const normK = interpolateCubic(energy, firstNorm.normalised, eOfK);
  const bkg = fitBackground(k, normK, settings.background, standardOnGrid(options.standard, points));

  // background on the measured energies, in mu units
  const background = new Float64Array(energy.length);
  {
    const kAt = new Float64Array(energy.length);
    for (let i = 0; i < energy.length; i++) kAt[i] = energy[i] > e0 ? Math.sqrt(K2_PER_EV * (energy[i] - e0)) : 0;
    const spline = evaluateSpline(bkg.basis, bkg.coefficients, kAt);
    for (let i = 0; i < energy.length; i++) background[i] = energy[i] >= e0 ? firstNorm.preLine[i] + firstNorm.edgeStep * spline[i] : firstNorm.preLine[i];
  }
  // optional refinement: the post-edge polynomial refitted to the smooth mu0(E), chi rescaled
  const norm = normalisation.refineStep ? normalise(energy, mu, e0, normalisation, file, background) : firstNorm;
  const chiValues = bkg.chi;
  if (norm !== firstNorm) {
    const ratio = firstNorm.edgeStep / norm.edgeStep;
    for (let i = 0; i < chiValues.length; i++) chiValues[i] *= ratio;
  }

  const noise = estimateNoise(k, chiValues, settings.noise);

  const lineReport = (l: typeof norm.preEdge) => ({ requested: l.requested, used: l.used, clipped: l.clipped, order: l.order, points: l.points, coefficients: l.coefficients });
  const reduction: Record<string, unknown> = {
    e0: {
      ...e0Report,
      derivative: Number.isFinite(e0Report.derivative) ? e0Report.derivative : null,
      tabulatedEdge: table?.energy ?? null,
      tabulatedSource: table ? `${scan.info.element} ${scan.info.edge} edge, xraylib 4.0.0` : null,
      differenceEv: table ? e0 - table.energy : null,
    },
    preEdge: { ...lineReport(norm.preEdge), shortPreEdge },
    postEdge: lineReport(norm.postEdge),
    edgeStep: norm.edgeStep,
    edgeStepBeforeRefinement: firstNorm.edgeStep,
    background: {
      method: 'cubic B-spline in k, coefficients by linear least squares minimising |chi(R)| for R <= cutoffR (Newville et al., Phys. Rev. B 47, 14126 (1993))',
      cutoffR: settings.background.cutoffR,
      knotSpacing: bkg.basis.spacing,
      knots: bkg.basis.intervals + 1,
      basisFunctions: bkg.basis.count,
      kRange: [bkg.basis.a, bkg.basis.b],
      kWeighting: settings.background.kWeighting,
      window: { shape: settings.background.windowShape, taper: settings.background.windowTaper },
      endWeightLow: settings.background.endWeightLow,
      endWeightHigh: settings.background.endWeightHigh,
      endWeightPoints: settings.background.endWeightPoints,
      regularisation: settings.background.regularisation,
      standard: options.standard ? 'theoretical chi(k) given: the low-R transform is matched to it' : null,
      lowRPoints: bkg.rPoints,
      lowRBefore: bkg.lowRBefore,
      lowRAfter: bkg.lowRAfter,
    },
    kGrid: { step: CHI_K_STEP, min: 0, max: k[points - 1], points, dataKMax: kData, interpolation: 'piecewise cubic Hermite in energy' },
    noise,
    glitches: removed,
    calibration,
    warnings: reductionWarnings,
  };
  const provenance = makeProvenance(settingsRecord(settings, smoothing), [
    { role: 'scan', file: input.info.file ?? undefined, sha256: input.info.sha256 ?? 'in-memory' },
  ]);
  const chi = makeChi({
    k,
    chi: chiValues,
    e0,
    edgeStep: norm.edgeStep,
    noise,
    element: scan.info.element,
    edge: scan.info.edge,
    normalised: {
      energy,
      mu,
      preEdge: norm.preLine,
      postEdge: norm.postLine,
      normalised: norm.normalised,
      detrended: norm.detrended,
      background,
    },
    reduction,
    source: {
      file: input.info.file,
      sha256: input.info.sha256,
      format: input.info.format,
      signal: input.info.signal,
      muFormula: input.info.muFormula,
      energyAxis: input.info.energyAxis,
      history: [...scan.info.history],
      fields: { ...input.info.fields },
    },
    warnings,
    provenance,
  });
  return { chi, scan };
}

/** The settings as a JSON-safe record (null for "to the end of the data"). */
function settingsRecord(s: ReductionSettings, smoothing: number): Record<string, unknown> {
  return JSON.parse(JSON.stringify({ ...s, e0SmoothingEv: s.e0 === null ? smoothing : null }));
}

