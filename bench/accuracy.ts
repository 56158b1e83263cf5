/**
 * Measured accuracy table: every EXAFS spectrum in test/data and test/data/library (public-domain
 * XDI data, sources in the READMEs there) against its crystal structure, by a first-shell R-space
 * fit with the library's own fitting entry points (loadChiOrReduce, shellsOfStructure,
 * tablesForPaths, buildExafsProblem, refine) and the firstPrinciples provider.
 *
 * Protocol (one for every compound): default reduction; k 3-12 1/Å, k^2 weighting, Hann window
 * (taper 1); R space, real and imaginary parts over [max(1.0, R1 - 0.9), R1 + 0.25] Å where R1 is
 * the nearest crystal distance; S0^2 (s0sq) free, one e0 free. The first shell is every shell with
 * r0 <= R1 + 0.15 Å (sub-shells of a distorted site, e.g. 3 + 3 O in corundum): one common
 * distance change dr and one msrd for all of them, so the fitted first-shell R is the
 * occupancy-weighted mean r0 + dr, compared with the crystal's weighted mean. Shells beyond it
 * with r0 <= R range end + 0.5 Å (the default recipe's path margin; their transform tails reach
 * into the window, e.g. the second shell of bcc Fe, the Ti shell of SrTiO3) get their own r and
 * msrd. Common practice, no source. The R-factor is the
 * library's (sum of squared residuals over the sum of squared data in the window).
 *
 * Crystals: room-temperature (or the stated T) handbook lattice constants, all from memory
 * (Wyckoff, Crystal Structures vols. 1-3 (1963-65) and the structure papers named per entry); a
 * wrong recalled constant shifts "crystal R" by about the same fraction.
 *
 * Run: npx tsx bench/accuracy.ts [--label before] [--samples Cu,Fe] [--settings JSON] [--reduce JSON]
 *        [--no-cache]
 * --settings overrides FirstPrinciplesSettings, --reduce the reduction (ReductionOptions), --r-low
 * the lowest start of the R range (default 1.0 Å), --standard-iterations N up to N refits, each on a
 * reduction whose background matches the low-R transform of the previous fit's model chi(k)
 * (Newville et al., Phys. Rev. B 47, 14126 (1993)), stopping when dR changes by < 0.0002 Å.
 * Writes bench/accuracy/<label>.json and bench/accuracy/<label>.md (atomic writes) and prints the
 * Markdown table. Tables are cached on disk (the provider's cache) unless --no-cache.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { writeFileAtomic } from '../src/core/files';
import { loadChiOrReduce } from '../src/fit/exafs/data';
import { buildExafsProblem, type PathRule } from '../src/fit/exafs/problem';
import { refine } from '../src/fit/exafs/refine';
import type { ParameterSpec } from '../src/fit/parameters';
import { tablesForPaths } from '../src/model/tables';
import { shellsOfStructure } from '../src/paths/index';
import { readScan } from '../src/read/spectrum/index';
import { readStructureText } from '../src/read/structure/index';
import { findE0 } from '../src/reduce/edge';
import { reduceScan, refineBackgroundWithModel } from '../src/reduce/index';
import type { ReductionOptions } from '../src/reduce/reduce';
import { DEFAULT_BACKGROUND } from '../src/reduce/background';
import { firstPrinciplesProvider } from '../src/scatter/provider-first-principles';
import type { Structure } from '../src/structure/structure';

const args = process.argv.slice(2);
const option = (name: string): string | undefined => {
  const i = args.indexOf(name);
  return i >= 0 ? args[i + 1] : undefined;
};
const label = option('--label') ?? 'current';
const settings = JSON.parse(option('--settings') ?? '{}');
const wanted = option('--samples')?.split(',');
/** Reduction options (ReductionOptions JSON, e.g. '{"background":{"cutoffR":0.8}}'); default: the default reduction. */
const reduceOptions: ReductionOptions | null = option('--reduce') ? JSON.parse(option('--reduce')!) : null;
const K_RANGE: [number, number] = [3, 12];
/** Lowest start of the fit's R range, Å (default 1.0, the background cutoff). */
const R_LOW = Number(option('--r-low') ?? 1.0);
/** Refits with the background refined against the previous fit's model as standard (0: none). */
const STANDARD_ITERATIONS = Number(option('--standard-iterations') ?? 0);
const FIRST_SHELL_SPREAD = 0.15;
const TAIL_MARGIN = 0.5;

const DATA = new URL('../test/data/', import.meta.url).pathname;
const OUT = new URL('./accuracy/', import.meta.url).pathname;

type Site = [label: string, x: number, y: number, z: number];
type Cell = [a: number, b: number, c: number, alpha: number, beta: number, gamma: number];

/** A crystal as CIF text read by our CIF reader (which applies the operators). */
function crystal(title: string, cell: Cell, sites: Site[], ops: string[] = ['x,y,z']): Structure {
  const text = [
    `data_${title.replace(/[^A-Za-z0-9]/g, '_')}`,
    ...['a', 'b', 'c'].map((n, i) => `_cell_length_${n} ${cell[i]}`),
    ...['alpha', 'beta', 'gamma'].map((n, i) => `_cell_angle_${n} ${cell[i + 3]}`),
    'loop_', '_symmetry_equiv_pos_as_xyz', ...ops.map((o) => `'${o}'`),
    'loop_', '_atom_site_label', '_atom_site_fract_x', '_atom_site_fract_y', '_atom_site_fract_z',
    ...sites.map((s) => s.join(' ')),
  ].join('\n');
  return readStructureText(text, `${title}.cif`)[0];
}
const cubicCell = (a: number): Cell => [a, a, a, 90, 90, 90];
const FCC = ['x,y,z', 'x,y+1/2,z+1/2', 'x+1/2,y,z+1/2', 'x+1/2,y+1/2,z'];
const rockSalt = (m: string, x: string, a: number) => crystal(`${m}${x} rock salt`, cubicCell(a), [[`${m}1`, 0, 0, 0], [`${x}1`, 0.5, 0.5, 0.5]], FCC);

/** R-3c (No. 167), hexagonal axes: 12 coset representatives and the R centring (as in test/fixtures/structures/corundum-r3c.cif). */
const R3C = (() => {
  const base = ['x,y,z', '-y,x-y,z', '-x+y,-x,z', 'y,x,-z+1/2', 'x-y,-y,-z+1/2', '-x,-x+y,-z+1/2', '-x,-y,-z', 'y,-x+y,-z', 'x-y,x,-z', '-y,-x,z+1/2', '-x+y,y,z+1/2', 'x,x-y,z+1/2'];
  const shift = (o: string, t: string[]) => o.split(',').map((c, i) => `${c}+${t[i]}`).join(',');
  return [...base, ...base.map((o) => shift(o, ['2/3', '1/3', '1/3'])), ...base.map((o) => shift(o, ['1/3', '2/3', '2/3']))];
})();
/** C2/c (No. 15, unique axis b): four operators and the C centring (International Tables Vol. A, from memory). */
const C2C = (() => {
  const base = ['x,y,z', '-x,y,-z+1/2', '-x,-y,-z', 'x,-y,z+1/2'];
  return [...base, ...base.map((o) => o.split(',').map((c, i) => (i < 2 ? `${c}+1/2` : c)).join(','))];
})();

interface Compound {
  name: string;
  file: string;
  absorber: string;
  /** Where the structure comes from (printed in the table). */
  source: string;
  structure: () => Structure;
}

const COMPOUNDS: Compound[] = [
  { name: 'Cu', file: 'cu_metal_rt.xdi', absorber: 'Cu', source: 'fcc a = 3.6149 Å (Wyckoff vol. 1, from memory)',
    structure: () => crystal('Cu', cubicCell(3.6149), [['Cu1', 0, 0, 0]], FCC) },
  { name: 'Fe', file: 'fe_metal_rt.xdi', absorber: 'Fe', source: 'bcc a = 2.8665 Å (Wyckoff vol. 1, from memory)',
    structure: () => crystal('Fe', cubicCell(2.8665), [['Fe1', 0, 0, 0], ['Fe2', 0.5, 0.5, 0.5]]) },
  { name: 'ZnSe', file: 'zn_znse_rt.xdi', absorber: 'Zn', source: 'zinc blende a = 5.6676 Å (Wyckoff vol. 1, from memory)',
    structure: () => crystal('ZnSe', cubicCell(5.6676), [['Zn1', 0, 0, 0], ['Se1', 0.25, 0.25, 0.25]], FCC) },
  { name: 'Cr2O3', file: 'library/cr2o3_rt_001.xdi', absorber: 'Cr',
    source: 'corundum a = 4.9588, c = 13.5942 Å, Cr 12c z = 0.3475, O 18e x = 0.3058 (Finger and Hazen, J. Appl. Phys. 51, 5362 (1980), from memory); first of three scans',
    structure: () => crystal('Cr2O3', [4.9588, 4.9588, 13.5942, 90, 90, 120], [['Cr1', 0, 0, 0.3475], ['O1', 0.3058, 0, 0.25]], R3C) },
  { name: 'CdO 10 K', file: 'library/CdO_10K_01.xdi', absorber: 'Cd', source: 'rock salt a = 4.6953 Å (room temperature; Wyckoff vol. 1, from memory)',
    structure: () => rockSalt('Cd', 'O', 4.6953) },
  { name: 'SrO', file: 'library/SrO_rt_01.xdi', absorber: 'Sr', source: 'rock salt a = 5.1602 Å (Wyckoff vol. 1, from memory)',
    structure: () => rockSalt('Sr', 'O', 5.1602) },
  { name: 'SrTiO3', file: 'library/SrTiO3_rt_01.xdi', absorber: 'Sr', source: 'cubic perovskite a = 3.905 Å (Wyckoff vol. 2, from memory)',
    structure: () => crystal('SrTiO3', cubicCell(3.905), [['Sr1', 0, 0, 0], ['Ti1', 0.5, 0.5, 0.5], ['O1', 0.5, 0.5, 0], ['O2', 0.5, 0, 0.5], ['O3', 0, 0.5, 0.5]]) },
  { name: 'MnO', file: 'library/MnO_rt_01.xdi', absorber: 'Mn', source: 'rock salt a = 4.4448 Å (Wyckoff vol. 1, from memory)',
    structure: () => rockSalt('Mn', 'O', 4.4448) },
  { name: 'MnO2', file: 'library/MnO2_rt_01.xdi', absorber: 'Mn',
    source: 'pyrolusite (rutile type) a = 4.3983, c = 2.8730 Å, O x = 0.3047 (Baur, Acta Cryst. B32, 2200 (1976), from memory)',
    structure: () => {
      const x = 0.3047;
      return crystal('MnO2', [4.3983, 4.3983, 2.873, 90, 90, 90], [['Mn1', 0, 0, 0], ['Mn2', 0.5, 0.5, 0.5], ['O1', x, x, 0], ['O2', -x, -x, 0], ['O3', 0.5 + x, 0.5 - x, 0.5], ['O4', 0.5 - x, 0.5 + x, 0.5]]);
    } },
  { name: 'Ni(OH)2', file: 'library/NiOH2_rt_01.xdi', absorber: 'Ni',
    source: 'brucite type P-3m1 a = 3.126, c = 4.605 Å, O (1/3, 2/3, z) z = 0.2221, H z = 0.43 (from memory)',
    structure: () => crystal('NiOH2', [3.126, 3.126, 4.605, 90, 90, 120], [['Ni1', 0, 0, 0], ['O1', 1 / 3, 2 / 3, 0.2221], ['O2', 2 / 3, 1 / 3, -0.2221], ['H1', 1 / 3, 2 / 3, 0.43], ['H2', 2 / 3, 1 / 3, -0.43]]) },
  { name: 'CuO 13 K', file: 'library/CuO_tenorite_13K_01.xdi', absorber: 'Cu',
    source: 'tenorite C2/c a = 4.6837, b = 3.4226, c = 5.1288 Å, beta = 99.54°, Cu 4c, O 4e y = 0.4184 (room temperature; Åsbrink and Norrby, Acta Cryst. B26, 8 (1970), from memory)',
    structure: () => crystal('CuO', [4.6837, 3.4226, 5.1288, 90, 99.54, 90], [['Cu1', 0.25, 0.25, 0], ['O1', 0, 0.4184, 0.25]], C2C) },
  { name: 'Na2SeO4', file: 'library/Se_Na2SeO4_rt_01.xdi', absorber: 'Se',
    source: 'an isolated SeO4 tetrahedron, Se-O 1.645 Å (selenate mean bond length, from memory); Na and the crystal beyond the anion are left out',
    structure: () => {
      const d = 1.645 / Math.sqrt(3);
      const text = ['5', 'SeO4 tetrahedron', 'Se 0 0 0', `O ${d} ${d} ${d}`, `O ${-d} ${-d} ${d}`, `O ${-d} ${d} ${-d}`, `O ${d} ${-d} ${-d}`].join('\n');
      return readStructureText(text, 'SeO4.xyz')[0];
    } },
  { name: 'Au L3', file: 'library/Au_Foil_L3_rt_2016Foils.xdi', absorber: 'Au', source: 'fcc a = 4.0782 Å (Wyckoff vol. 1, from memory)',
    structure: () => crystal('Au', cubicCell(4.0782), [['Au1', 0, 0, 0]], FCC) },
];

/**
 * Not in the table. The four Mn oxide scans of the library (MnO, Mn3O4, Mn2O3, MnO2) all run from
 * 6520 to 6630 eV, about 90 eV past the edge (k < 5 1/Å): near-edge data, no EXAFS. MnO and MnO2
 * stay in the list above so the table shows what the reduction says about them.
 */
const LEFT_OUT = [
  'Mn3O4 and Mn2O3 (their scans, like those of MnO and MnO2, end about 90 eV above the edge: near-edge data, no EXAFS)',
];

const round = (x: number, digits: number) => Number(x.toFixed(digits));

function measure(c: Compound, provider: ReturnType<typeof firstPrinciplesProvider>, reduceOptions: ReductionOptions | null) {
  const started = performance.now();
  const base = { compound: c.name, file: c.file, structure: c.source };
  let chi;
  let reduction = 'default';
  let shortPreEdge: ReductionOptions = {};
  try {
    chi = reduceOptions ? reduceScan(readScan(join(DATA, c.file)), reduceOptions).chi : loadChiOrReduce(join(DATA, c.file)).chi;
  } catch (e) {
    // A scan that starts less than 20 eV below the tabulated edge is refused by the default
    // reduction; here it is reduced with E0 at the derivative maximum and the pre-edge line over
    // what the scan has (from 1 eV after its start to 8 eV below E0), and the row says so.
    if (!/within 20 eV/.test((e as Error).message)) return { ...base, refused: (e as Error).message.replaceAll(DATA, 'test/data/') };
    const scan = readScan(join(DATA, c.file));
    const e0 = findE0(scan.energy, scan.mu).value;
    const preEdge: [number, number] = [round(scan.energy[0] - e0 + 1, 1), -8];
    try {
      shortPreEdge = { e0, normalisation: { ...reduceOptions?.normalisation, preEdge } };
      chi = reduceScan(scan, { ...reduceOptions, ...shortPreEdge }).chi;
    } catch (again) {
      return { ...base, refused: (again as Error).message.replaceAll(DATA, 'test/data/') };
    }
    reduction = `short pre-edge: E0 ${e0.toFixed(1)} eV at the derivative maximum, pre-edge line over [${preEdge.join(', ')}] eV`;
  }
  const edge = chi.edge ?? 'K';
  const set = shellsOfStructure(c.structure(), { absorber: { element: c.absorber }, radius: 6, edge });
  const r1 = set.paths[0].r;
  const rRange: [number, number] = [round(Math.max(R_LOW, r1 - 0.9), 2), round(r1 + 0.25, 2)];
  const first = set.paths.filter((p) => p.r <= r1 + FIRST_SHELL_SPREAD);
  const tails = set.paths.filter((p) => p.r > r1 + FIRST_SHELL_SPREAD && p.r <= rRange[1] + TAIL_MARGIN);
  const nFirst = first.reduce((s, p) => s + p.degeneracy, 0);
  const meanR0 = first.reduce((s, p) => s + p.degeneracy * p.r, 0) / nFirst;
  const parameters: ParameterSpec[] = [
    { name: 's0sq', value: 0.9, lower: 0.05, upper: 3 },
    { name: 'e0', value: 0, lower: -30, upper: 30 },
    { name: 'dr1', value: 0, lower: -0.5, upper: 0.5 },
    { name: 'msrd1', value: 0.005, lower: -0.01, upper: 0.1 },
  ];
  const rules: PathRule[] = first.map((p) => ({ n: String(p.degeneracy), r: `${p.r} + dr1`, msrd: 'msrd1', c3: '0', c4: '0' }));
  tails.forEach((p, j) => {
    parameters.push({ name: `r_t${j}`, value: p.r, lower: p.r - 0.5, upper: p.r + 0.5 }, { name: `msrd_t${j}`, value: 0.005, lower: -0.01, upper: 0.1 });
    rules.push({ n: String(p.degeneracy), r: `r_t${j}`, msrd: `msrd_t${j}`, c3: '0', c4: '0' });
  });
  const paths = [...first, ...tails];
  const tables = tablesForPaths(set, paths, provider, K_RANGE[1] + 1);
  let problem;
  try {
    problem = buildExafsProblem(parameters, [{
      name: c.file, k: chi.k, chi: chi.chi, noiseChi: chi.noise.k, paths, tables, rules,
      kRange: K_RANGE, kWeightings: [2], kTaper: { shape: 'hann', taper: 1 }, rRange, rTaper: { shape: 'hann', taper: 0.5 }, fitIn: 'R',
    }]);
  } catch (e) {
    // e.g. a scan that reduces but ends short of the fit's k range
    return { ...base, refused: (e as Error).message.replaceAll(DATA, 'test/data/') };
  }
  const fitChi = (data: typeof chi) => {
    const next = buildExafsProblem(parameters, [{
      name: c.file, k: data.k, chi: data.chi, noiseChi: data.noise.k, paths, tables, rules,
      kRange: K_RANGE, kWeightings: [2], kTaper: { shape: 'hann', taper: 1 }, rRange, rTaper: { shape: 'hann', taper: 0.5 }, fitIn: 'R',
    }]);
    const fitted = refine(next, { maxIterations: 200 });
    return { result: fitted, model: fitted.curves[0].model, value: fitted.params.dr1.value };
  };
  // background refined with the fitted model as its standard, re-reduced and refitted
  const scan = readScan(join(DATA, c.file));
  const iterated = refineBackgroundWithModel(
    (standard) => (standard ? reduceScan(scan, { ...reduceOptions, ...shortPreEdge, standard }).chi : chi),
    fitChi, { maxIterations: STANDARD_ITERATIONS });
  const result = iterated.fit;
  const history = iterated.history.map((x) => round(x, 4));
  const p = result.params;
  const corr = result.correlations.find((x) => (x.a === 'e0' && x.b === 'dr1') || (x.a === 'dr1' && x.b === 'e0'));
  const rFit = meanR0 + p.dr1.value;
  return {
    ...base,
    edge,
    reduction,
    firstShell: first.map((s) => `${round(s.degeneracy, 3)} ${s.scatterer} ${round(s.r, 4)}`).join(' + '),
    otherShellsFitted: tails.map((s) => `${round(s.degeneracy, 3)} ${s.scatterer} ${round(s.r, 4)}`),
    kRange: K_RANGE,
    rRange,
    rCrystal: round(meanR0, 4),
    rFit: round(rFit, 4),
    dR: round(p.dr1.value, 4),
    dRIterations: history,
    dRError: round(p.dr1.error, 4),
    s0sq: round(p.s0sq.value, 3),
    e0: round(p.e0.value, 2),
    msrd: round(p.msrd1.value, 5),
    rFactor: round(result.stats.rFactor, 4),
    e0DrCorrelation: corr ? round(corr.value, 2) : null,
    converged: result.status.converged,
    accepted: Math.abs(p.dr1.value) < 0.02 && p.s0sq.value >= 0.7 && p.s0sq.value <= 1.1 && Math.abs(p.e0.value) < 10 && p.msrd1.value > 0,
    seconds: round((performance.now() - started) / 1000, 1),
  };
}

const provider = firstPrinciplesProvider({ cache: !args.includes('--no-cache'), settings });
/**
 * Sensitivity to the background: the same fit on reductions with the background cutoff R_cut
 * moved from its value (default 1.0 Å) by -0.1 and +0.1 Å. A first shell whose fitted distance
 * moves by more than a few 0.001 Å here is limited by the background removal, not by the
 * scattering functions.
 */
const CUTOFF_STEPS = [-0.1, 0.1];
const baseCutoff = reduceOptions?.background?.cutoffR ?? DEFAULT_BACKGROUND.cutoffR;
const rows = COMPOUNDS.filter((c) => !wanted || wanted.includes(c.name)).map((c) => {
  const row = measure(c, provider, reduceOptions);
  const dRAtCutoff: Record<string, number | null> = {};
  if (!('refused' in row)) {
    for (const step of CUTOFF_STEPS) {
      const cutoffR = round(baseCutoff + step, 3);
      const other = measure(c, provider, { ...reduceOptions, background: { ...reduceOptions?.background, cutoffR } });
      dRAtCutoff[cutoffR.toFixed(2)] = 'dR' in other ? other.dR! : null;
    }
  }
  const full = { ...row, dRAtCutoff };
  console.error(JSON.stringify(full));
  return full;
});

const cell = (x: unknown) => (x === null || x === undefined ? '—' : String(x));
const markdown = [
  `First-shell fits (${label}): k ${K_RANGE.join('-')} 1/Å, k^2, R space, S0^2 free; R = occupancy-weighted mean first-shell distance, Å.`,
  '',
  `| spectrum | first shell (crystal) | R crystal | R fit | dR | S0^2 | e0 (eV) | msrd (Å^2) | R-factor | corr(e0, dR) | dR at R_cut ${CUTOFF_STEPS.map((d) => (baseCutoff + d).toFixed(1)).join(' / ')} |`,
  '|---|---|---|---|---|---|---|---|---|---|---|',
  ...rows.map((r) => 'refused' in r
    ? `| ${r.compound} | refused: ${r.refused!.replace(/\|/g, '/')} ||||||||||`
    : `| ${r.compound} | ${r.firstShell} | ${r.rCrystal.toFixed(3)} | ${r.rFit.toFixed(3)} | ${r.dR >= 0 ? '+' : ''}${r.dR.toFixed(3)} | ${r.s0sq.toFixed(2)} | ${r.e0.toFixed(1)} | ${r.msrd.toFixed(4)} | ${r.rFactor.toFixed(3)} | ${cell(r.e0DrCorrelation)} | ${Object.values(r.dRAtCutoff).map((x) => (x === null ? '—' : `${x >= 0 ? '+' : ''}${x.toFixed(3)}`)).join(' / ')} |`),
  '',
  ...rows.filter((r) => 'reduction' in r && r.reduction !== 'default').map((r) => `${r.compound}: ${(r as { reduction: string }).reduction}.`),
  `Not measured: ${LEFT_OUT.join('; ')}.`,
].join('\n');
mkdirSync(OUT, { recursive: true });
writeFileAtomic(join(OUT, `${label}.json`), JSON.stringify({ benchmark: 'accuracy', label, settings, reduce: reduceOptions, kRange: K_RANGE, leftOut: LEFT_OUT, rows }, null, 1) + '\n');
writeFileAtomic(join(OUT, `${label}.md`), markdown + '\n');
console.log(markdown);
