/**
 * `shellrank reduce FILE... [options]`: read measured scans, merge repeats (aligned), and reduce
 * mu(E) to chi(k). Prints a summary (or the Chi JSON with --json); writes the Chi JSON (--out),
 * the normalised data as XDI (--xdi-out) and an SVG plot (--plot). All outputs are computed
 * before any is written, and each is written atomically, never over an input.
 */
import { resolve } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { readTextFile, writeFileAtomic } from '../../core/files';
import { parseEdge } from '../../elements/index';
import { forwardTransform, magnitude } from '../../numeric/fourier';
import { readScanText, type ReadScanOptions } from '../../read/spectrum/index';
import type { ColumnRole, Scan } from '../../read/spectrum/scan';
import { chiToJson, mergeScans, normalisedToXdi, reduceScan, DEFAULT_MERGE, type Chi, type MergeResult, type ReductionOptions } from '../../reduce/index';
import { renderLinePanels } from '../../report/svg-lines';
import type { CliIo } from '../io';
import { parseInteger, parseNumber, parseRange } from '../options';

interface ReduceCliOptions {
  e0?: string;
  bkgCutoff: string;
  preEdge?: string;
  postEdge?: string;
  preOrder?: string;
  postOrder?: string;
  kWeighting?: string;
  kMax?: string;
  endWeights?: string;
  signal?: string;
  columns?: string;
  energyUnit?: string;
  dSpacing?: string;
  element?: string;
  edge?: string;
  calibrate?: boolean;
  glitch?: string;
  findGlitches?: boolean;
  align?: string;
  weights?: string;
  json?: boolean;
  out?: string;
  xdiOut?: string;
  plot?: string;
}

const ROLES: readonly ColumnRole[] = ['energy', 'angle', 'incident', 'transmitted', 'fluorescence', 'reference', 'mu', 'muReference'];

/** "150:end" or "150:900" -> [150, null] / [150, 900]. */
function parseOpenRange(option: string, text: string): [number, number | null] {
  const parts = text.split(':');
  if (parts.length === 2 && parts[1].trim().toLowerCase() === 'end') return [parseNumber(option, parts[0]), null];
  return parseRange(option, text);
}

function parseColumns(text: string): Partial<Record<ColumnRole, string>> {
  const out: Partial<Record<ColumnRole, string>> = {};
  for (const part of text.split(',')) {
    const [role, name] = part.split('=').map((s) => s.trim());
    if (!role || !name || !(ROLES as readonly string[]).includes(role)) {
      throw new InputError(`expected ROLE=COLUMN pairs with ROLE one of ${ROLES.join(', ')}, got '${part}'`, { key: '--columns' });
    }
    out[role as ColumnRole] = name;
  }
  return out;
}

function readOptions(o: ReduceCliOptions): ReadScanOptions {
  const r: ReadScanOptions = {};
  if (o.signal !== undefined) {
    if (!['transmission', 'fluorescence', 'mu'].includes(o.signal)) throw new InputError(`expected transmission, fluorescence or mu, got '${o.signal}'`, { key: '--signal' });
    r.signal = o.signal as ReadScanOptions['signal'];
  }
  if (o.columns !== undefined) r.columns = parseColumns(o.columns);
  if (o.energyUnit !== undefined) {
    if (o.energyUnit !== 'eV' && o.energyUnit !== 'keV') throw new InputError(`expected eV or keV, got '${o.energyUnit}'`, { key: '--energy-unit' });
    r.energyUnit = o.energyUnit;
  }
  if (o.dSpacing !== undefined) r.dSpacing = parseNumber('--d-spacing', o.dSpacing, { min: 0, exclusiveMin: true });
  if (o.element !== undefined) r.element = o.element;
  if (o.edge !== undefined) {
    try {
      r.edge = parseEdge(o.edge);
    } catch (e) {
      throw e instanceof InputError ? e.withLocation({ key: '--edge' }) : e;
    }
  }
  return r;
}

function reductionOptions(o: ReduceCliOptions): ReductionOptions {
  const r: ReductionOptions = { normalisation: {}, background: {}, glitches: {} };
  if (o.e0 !== undefined) r.e0 = parseNumber('--e0', o.e0, { min: 0, exclusiveMin: true });
  r.background!.cutoffR = parseNumber('--bkg-cutoff', o.bkgCutoff, { min: 0, exclusiveMin: true, max: 5 });
  if (o.preEdge !== undefined) r.normalisation!.preEdge = parseRange('--pre-edge', o.preEdge);
  if (o.postEdge !== undefined) r.normalisation!.postEdge = parseOpenRange('--post-edge', o.postEdge);
  if (o.preOrder !== undefined) r.normalisation!.preEdgeOrder = parseInteger('--pre-order', o.preOrder);
  if (o.postOrder !== undefined) r.normalisation!.postEdgeOrder = parseInteger('--post-order', o.postOrder);
  if (o.kWeighting !== undefined) r.background!.kWeighting = parseNumber('--k-weight', o.kWeighting, { min: 0, max: 4 });
  if (o.kMax !== undefined) r.kMax = parseNumber('--k-max', o.kMax, { min: 2, exclusiveMin: true });
  if (o.endWeights !== undefined) {
    const parts = o.endWeights.split(':');
    if (parts.length !== 2) throw new InputError(`expected LOW:HIGH end weights, got '${o.endWeights}'`, { key: '--end-weights' });
    r.background!.endWeightLow = parseNumber('--end-weights', parts[0], { min: 0 });
    r.background!.endWeightHigh = parseNumber('--end-weights', parts[1], { min: 0 });
  }
  if (o.glitch !== undefined) r.glitches!.energies = o.glitch.split(',').map((s) => parseNumber('--glitch', s));
  if (o.findGlitches) r.glitches!.detect = true;
  if (o.calibrate) r.calibrate = true;
  return r;
}

function mergeOptions(o: ReduceCliOptions) {
  const s = { ...DEFAULT_MERGE };
  if (o.align !== undefined) {
    if (!['mu', 'reference', 'none'].includes(o.align)) throw new InputError(`expected mu, reference or none, got '${o.align}'`, { key: '--align' });
    s.alignOn = o.align as typeof s.alignOn;
  }
  if (o.weights !== undefined) {
    s.weights = o.weights === 'equal' || o.weights === 'noise' ? o.weights : o.weights.split(',').map((w) => parseNumber('--weights', w, { min: 0 }));
  }
  return s;
}

/** The three-panel plot: mu(E) with background and edge lines, k^2 chi(k), |chi(R)|. */
export function reductionPlot(chi: Chi, title: string): string {
  const n = chi.normalised!;
  const kw = 2;
  const kMax = chi.k[chi.k.length - 1];
  const weighted = chi.chi.map((c, i) => c * chi.k[i] ** kw);
  const window = { shape: 'hann' as const, min: Math.min(3, kMax / 2), max: Math.min(14, kMax - 0.5), taper: 1 };
  const ft = forwardTransform(chi.k, chi.chi, { kWeighting: kw, window });
  const mag = magnitude(ft);
  const keep = ft.x.findIndex((x) => x > 8);
  return renderLinePanels(
    [
      {
        title: `mu(E), E0 = ${chi.e0.toFixed(2)} eV, edge step ${chi.edgeStep.toPrecision(4)}`,
        xLabel: 'E (eV)',
        yLabel: 'μ(E) (arb. units)',
        series: [
          { label: 'μ(E)', x: n.energy, y: n.mu },
          { label: 'background μ0(E)', x: n.energy, y: n.background },
          { label: 'pre-edge line', x: n.energy, y: n.preEdge, dashed: true },
          { label: 'post-edge polynomial', x: n.energy, y: n.postEdge.map((v, i) => (n.energy[i] >= chi.e0 ? v : NaN)), dashed: true },
        ],
      },
      { title: 'chi(k), k-weight 2', xLabel: 'k (Å⁻¹)', yLabel: 'k²χ(k) (Å⁻²)', series: [{ label: 'k²χ(k)', x: chi.k, y: weighted }] },
      {
        title: `|chi(R)|, hann window k ${window.min}-${window.max.toFixed(2)} Å⁻¹, not phase-corrected`,
        xLabel: 'R (Å)',
        yLabel: '|χ(R)| (Å⁻³)',
        series: [{ label: '|χ(R)|', x: ft.x.subarray(0, keep), y: mag.subarray(0, keep) }],
      },
    ],
    { title },
  );
}

function summary(file: string, chi: Chi, merge: MergeResult | null, scans: Scan[], alignedOn: string): string {
  const r = chi.info.reduction as Record<string, any>;
  const lines: string[] = [];
  lines.push(`${file}: ${chi.element ?? '?'} ${chi.edge ?? '?'} edge, ${chi.info.source?.muFormula ?? ''} (${chi.info.source?.signal ?? ''})`);
  if (merge) {
    lines.push(`merged ${scans.length} scans over ${merge.energyRange[0]}-${merge.energyRange[1]} eV, aligned on ${alignedOn}:`);
    scans.forEach((s, i) => lines.push(`  ${s.info.file}: shift ${merge.shiftsEv[i].toFixed(3)} eV, weight ${merge.weights[i].toFixed(4)}`));
  }
  if (r.calibration) lines.push(`calibration: reference E0 ${r.calibration.referenceE0.toFixed(2)} eV -> ${r.calibration.tabulatedEdge} eV (shift ${r.calibration.shiftEv.toFixed(3)} eV, ${r.calibration.source})`);
  const tab = r.e0.tabulatedEdge !== null ? `; tabulated edge ${r.e0.tabulatedEdge} eV (xraylib 4.0.0), difference ${r.e0.differenceEv.toFixed(2)} eV` : '';
  lines.push(`E0 = ${chi.e0.toFixed(2)} eV (${r.e0.method}${r.e0.method === 'given' ? '' : `, smoothing ${r.e0.smoothingEv} eV`}${tab})`);
  lines.push(`edge step = ${chi.edgeStep.toPrecision(5)} (before refinement ${Number(r.edgeStepBeforeRefinement).toPrecision(5)})`);
  lines.push(`pre-edge: E0 ${r.preEdge.used[0].toFixed(1)} to ${r.preEdge.used[1].toFixed(1)} eV, order ${r.preEdge.order}, ${r.preEdge.points} points${r.preEdge.shortPreEdge ? ' (short pre-edge: from the first point of the scan)' : r.preEdge.clipped ? ' (range clipped to the data)' : ''}`);
  lines.push(`post-edge: E0 +${r.postEdge.used[0].toFixed(1)} to +${r.postEdge.used[1].toFixed(1)} eV, order ${r.postEdge.order}, ${r.postEdge.points} points${r.postEdge.clipped ? ' (range clipped to the data)' : ''}`);
  const b = r.background;
  lines.push(`background: cutoff ${b.cutoffR} Å, ${b.basisFunctions} cubic B-splines, knot spacing ${b.knotSpacing.toFixed(3)} Å⁻¹, k ${b.kRange[0]}-${b.kRange[1].toFixed(2)} Å⁻¹, k-weight ${b.kWeighting}, end weights ${b.endWeightLow}/${b.endWeightHigh} over ${b.endWeightPoints} points`);
  lines.push(`chi(k): ${chi.k.length} points, k 0-${chi.k[chi.k.length - 1].toFixed(2)} Å⁻¹ in steps of 0.05`);
  lines.push(`noise: ${chi.noise.k.toExponential(2)} per point in chi(k); |chi(R)| ${chi.noise.r.toExponential(2)} (R ${chi.noise.rRange[0]}-${chi.noise.rRange[1]} Å, k-weight ${chi.noise.kWeighting})`);
  if (r.glitches.length) lines.push(`glitches removed: ${r.glitches.map((g: any) => `${g.energy} eV (line ${g.line}, ${g.reason})`).join(', ')}`);
  return lines.join('\n') + '\n';
}

export function registerReduce(program: Command, io: CliIo): void {
  program
    .command('reduce')
    .description('reduce measured mu(E) (XDI or plain/CSV columns) to chi(k); several files are aligned and merged first')
    .argument('<files...>', 'measured scans (XDI, or columns with a header line)')
    .option('--e0 <eV>', 'edge energy E0 (default: maximum of the smoothed derivative)')
    .option('--bkg-cutoff <Å>', 'background cutoff distance R_cut', '1.0')
    .option('--pre-edge <lo:hi>', 'pre-edge range in eV from E0 (default -150:-30)')
    .option('--post-edge <lo:hi>', "post-edge range in eV from E0, 'end' for the scan's end (default 150:end)")
    .option('--pre-order <n>', 'pre-edge polynomial order (default 1)')
    .option('--post-order <n>', 'post-edge polynomial order (default 2)')
    .option('--k-weight <w>', 'k-weight of the background fit (default 2)')
    .option('--k-max <1/Å>', 'end of the chi(k) grid (default: the end of the data)')
    .option('--end-weights <low:high>', 'background end weights at the low and high k ends (default 0:1)')
    .option('--signal <kind>', 'transmission, fluorescence or mu (default: from the columns)')
    .option('--columns <role=name,...>', `column roles (${ROLES.join(', ')})`)
    .option('--energy-unit <unit>', 'eV or keV (default: detected)')
    .option('--d-spacing <Å>', 'monochromator d-spacing for an angle column')
    .option('--element <symbol>', 'absorbing element, when the file does not say')
    .option('--edge <edge>', 'absorption edge (K, L1, L2, L3), when the file does not say')
    .option('--calibrate', 'shift the energy so that the reference channel E0 is the tabulated edge')
    .option('--glitch <E,...>', 'energies (eV) of glitch points to remove')
    .option('--find-glitches', 'detect and remove single-point glitches')
    .option('--align <on>', 'align merged scans on mu, reference or none (default mu)')
    .option('--weights <w>', 'merge weights: equal, noise, or one number per file (default equal)')
    .option('--json', 'print the reduced spectrum as JSON')
    .option('--out <file>', 'write the reduced spectrum (JSON) to this file')
    .option('--xdi-out <file>', 'write the normalised mu(E) as XDI')
    .option('--plot <file.svg>', 'write a plot of mu(E), chi(k) and |chi(R)|')
    .action((files: string[], o: ReduceCliOptions) => {
      const readOpts = readOptions(o);
      const reduceOpts = reductionOptions(o);
      const mergeOpts = mergeOptions(o);
      const inputs = files.map((f) => resolve(io.cwd, f));
      const scans = files.map((f, i) => readScanText(readInput(inputs[i], f), f, readOpts));
      let merge: MergeResult | null = null;
      let scan = scans[0];
      if (scans.length > 1) {
        merge = mergeScans(scans, mergeOpts);
        scan = merge.scan;
      }
      const { chi } = reduceScan(scan, reduceOpts);
      // every output is made before anything is written
      const json = o.json || o.out ? chiToJson(chi, 1) : null;
      const xdi = o.xdiOut ? normalisedToXdi(chi) : null;
      const svg = o.plot ? reductionPlot(chi, `shellrank reduce: ${files.join(', ')}`) : null;
      for (const w of chi.info.warnings) io.stderr(`shellrank: warning: ${w}\n`);
      if (o.out) writeFileAtomic(resolve(io.cwd, o.out), json!, inputs);
      if (xdi !== null) writeFileAtomic(resolve(io.cwd, o.xdiOut!), xdi, inputs);
      if (svg !== null) writeFileAtomic(resolve(io.cwd, o.plot!), svg, inputs);
      if (o.json) io.stdout(json! + '\n');
      else io.stdout(summary(files.join(', '), chi, merge, scans, mergeOpts.alignOn));
    });
}

/** Read a file, naming it in errors as the user typed it. */
function readInput(absolute: string, asGiven: string): string {
  try {
    return readTextFile(absolute);
  } catch (e) {
    throw e instanceof InputError ? new InputError(e.reason, { file: asGiven }) : e;
  }
}
