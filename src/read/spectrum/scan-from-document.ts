/**
 * From a read document (labelled columns) to a Scan: which column is the energy, the incident,
 * transmitted, fluorescence and reference intensities or a ready mu; the energy unit; and mu.
 *
 * - Roles come from the column labels (the XDI specification's standard names such as `energy`,
 *   `angle`, `i0`, `itrans`, `ifluor`, `irefer`, `mutrans`, `mufluor`, `murefer`, plus common
 *   spellings) or from options, which always win.
 * - mu = ln(I0/It) for transmission, If/I0 for fluorescence, or a mu column as given
 *   (Beer-Lambert law; common practice, no source). Reference: ln(It/Iref) or a murefer column.
 * - Energy unit: the column's stated unit, else "keV"/"eV" in its label, else the values: a
 *   column whose largest value is below 200 and whose span is below 20 is in keV (an EXAFS scan
 *   spans hundreds of eV; common practice, no source). An angle column (degrees) becomes energy by
 *   Bragg's law E = hc / (2 d sin theta) with the Mono.d_spacing field or the `dSpacing` option.
 * - A scan whose energies all decrease is reversed (a warning); any other disorder is an error.
 */
import { InputError } from '../../core/errors';
import { canonicalSymbol, EDGE_NAMES, type EdgeName } from '../../elements/index';
import { fieldValue, formatWarning, type SpectrumDocument } from './document';
import { makeScan, type ColumnRole, type EnergyAxisReport, type Scan, type ScanSignal, type ScanStep } from './scan';
import { parseStrictNumber } from './table';

/**
 * hc in eV Å, from the exact SI values of h, c and e (CODATA 2018):
 * 6.62607015e-34 J s * 299792458 m/s / 1.602176634e-19 C = 1.2398419843320026e-6 eV m.
 */
export const HC_EV_ANGSTROM = 12398.419843320026;

/** Options for turning a document into a scan; every field optional. */
export interface ScanReadOptions {
  /** Column for each role, by label (case-insensitive) or 1-based index; overrides detection. */
  columns?: Partial<Record<ColumnRole, string | number>>;
  /** Which signal makes mu; default: transmission when I0 and It exist, else fluorescence, else a mu column. */
  signal?: ScanSignal;
  /** Energy unit of the energy column; default detected. */
  energyUnit?: 'eV' | 'keV';
  /** Monochromator d-spacing in Å for an angle column; default the file's Mono.d_spacing. */
  dSpacing?: number;
  /** Absorbing element and edge when the file does not say (or to override it). */
  element?: string;
  edge?: EdgeName;
}

const ROLE_PATTERNS: [ColumnRole, RegExp][] = [
  ['energy', /^(energy|energ|e|en|ev|kev|monoenergy|photonenergy|energyev|energykev|eev|ekev)$/],
  ['angle', /^(angle|theta|braggangle|monoangle)$/],
  ['incident', /^(i0|io|izero|monitor|incident|iinc)$/],
  ['transmitted', /^(it|i1|itrans|itransmitted|trans|transmission|itr)$/],
  ['fluorescence', /^(if|ifl|ifluor|ifluo|fluor|fluo|fluorescence|iff)$/],
  ['reference', /^(iref|irefer|ireference|i2|ir)$/],
  ['mu', /^(mu|mutrans|mufluor|mut|muf|absorption|mue)$/],
  ['muReference', /^(murefer|muref|mureference|mur)$/],
];

function normaliseLabel(label: string): string {
  return label.toLowerCase().replace(/[^a-z0-9]/g, '');
}

/** Detected role of a column label, or null. */
export function roleOfLabel(label: string): ColumnRole | null {
  const key = normaliseLabel(label);
  for (const [role, pattern] of ROLE_PATTERNS) if (pattern.test(key)) return role;
  return null;
}

function resolveColumn(doc: SpectrumDocument, role: ColumnRole, spec: string | number): number {
  if (typeof spec === 'number') {
    if (!Number.isInteger(spec) || spec < 1 || spec > doc.labels.length) {
      throw new InputError(`column ${spec} for ${role} does not exist (the table has ${doc.labels.length})`, { file: doc.file, key: `columns.${role}` });
    }
    return spec - 1;
  }
  const asNumber = /^\d+$/.test(spec.trim()) ? Number(spec) : NaN;
  if (Number.isInteger(asNumber)) return resolveColumn(doc, role, asNumber);
  const index = doc.labels.findIndex((l) => l.toLowerCase() === spec.trim().toLowerCase());
  if (index < 0) {
    throw new InputError(`no column named '${spec}' for ${role} (columns: ${doc.labels.join(', ')})`, { file: doc.file, key: `columns.${role}` });
  }
  return index;
}

/** Assign roles: options first, then labels (first match wins). */
export function assignRoles(doc: SpectrumDocument, options: ScanReadOptions = {}): Partial<Record<ColumnRole, number>> {
  const roles: Partial<Record<ColumnRole, number>> = {};
  const taken = new Set<number>();
  for (const [role, spec] of Object.entries(options.columns ?? {}) as [ColumnRole, string | number][]) {
    if (spec === undefined) continue;
    const index = resolveColumn(doc, role, spec);
    roles[role] = index;
    taken.add(index);
  }
  doc.labels.forEach((label, index) => {
    if (taken.has(index)) return;
    const role = roleOfLabel(label);
    if (role && roles[role] === undefined) {
      roles[role] = index;
      taken.add(index);
    }
  });
  return roles;
}

/**
 * Build a Scan from a document.
 * @throws InputError naming the file (and data line) when no energy or mu can be formed,
 *   an intensity under a logarithm is zero or negative, or energies are out of order.
 */
export function scanFromDocument(doc: SpectrumDocument, options: ScanReadOptions = {}): Scan {
  const file = doc.file;
  const warnings = doc.warnings.map((w) => formatWarning(file, w));
  const roles = assignRoles(doc, options);
  const { columns, lines } = doc.table;
  const n = doc.table.rows;
  const label = (i: number) => doc.labels[i];
  const history: ScanStep[] = [];

  // ---- energy axis
  let energy: Float64Array;
  let axis: EnergyAxisReport;
  let energyIndex: number;
  if (roles.energy === undefined && roles.angle !== undefined) {
    energyIndex = roles.angle;
    const dField = fieldValue(doc.fields, 'Mono.d_spacing');
    const d = options.dSpacing ?? (dField !== undefined ? parseStrictNumber(dField.split(/\s+/)[0]) : null);
    if (d === null || d === undefined || !(d > 0)) {
      throw new InputError(
        `column '${label(energyIndex)}' is a monochromator angle but no valid d-spacing is known (Mono.d_spacing field or the dSpacing option)`,
        { file, key: 'Mono.d_spacing' },
      );
    }
    const unit = (doc.units[energyIndex] ?? 'degrees').toLowerCase();
    const toRadians = /^(rad|radian|radians)$/.test(unit) ? 1 : /^(mdeg|millidegrees)$/.test(unit) ? Math.PI / 180000 : Math.PI / 180;
    energy = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const s = Math.sin(columns[energyIndex][i] * toRadians);
      if (!(s > 0)) throw new InputError(`angle ${columns[energyIndex][i]} gives no Bragg energy`, { file, line: lines[i] });
      energy[i] = HC_EV_ANGSTROM / (2 * d * s);
    }
    axis = { unit: 'deg', source: 'column unit', detail: `angle column '${label(energyIndex)}' converted by Bragg's law with d = ${d} Å` };
  } else {
    if (roles.energy === undefined) {
      energyIndex = 0;
      warnings.push(`${file}: no column is labelled as energy; column 1 ('${label(0)}') taken as energy`);
    } else energyIndex = roles.energy;
    const raw = columns[energyIndex];
    const { unit, source } = energyUnit(raw, doc.units[energyIndex], label(energyIndex), options.energyUnit);
    energy = unit === 'keV' ? raw.map((e) => e * 1000) : Float64Array.from(raw);
    axis = { unit, source, detail: `energy column '${label(energyIndex)}' in ${unit} (${source})` };
  }

  // ---- mu
  const has = (r: ColumnRole) => roles[r] !== undefined;
  const signal: ScanSignal = options.signal ?? (has('incident') && has('transmitted') ? 'transmission' : has('incident') && has('fluorescence') ? 'fluorescence' : 'mu');
  let mu: Float64Array;
  let muFormula: string;
  if (signal === 'transmission') {
    need(doc, roles, ['incident', 'transmitted'], signal);
    const i0 = columns[roles.incident!];
    const it = columns[roles.transmitted!];
    mu = logRatio(i0, it, label(roles.incident!), label(roles.transmitted!), lines, file);
    muFormula = `ln(${label(roles.incident!)}/${label(roles.transmitted!)})`;
  } else if (signal === 'fluorescence') {
    need(doc, roles, ['incident', 'fluorescence'], signal);
    const i0 = columns[roles.incident!];
    const fl = columns[roles.fluorescence!];
    mu = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      if (!(i0[i] > 0)) throw new InputError(`${label(roles.incident!)} is ${i0[i]}; the fluorescence signal divides by it and needs it positive`, { file, line: lines[i] });
      mu[i] = fl[i] / i0[i];
    }
    muFormula = `${label(roles.fluorescence!)}/${label(roles.incident!)}`;
  } else {
    need(doc, roles, ['mu'], signal);
    mu = Float64Array.from(columns[roles.mu!]);
    muFormula = label(roles.mu!);
  }

  // ---- reference channel (for calibration)
  let muReference: Float64Array | null = null;
  if (has('transmitted') && has('reference')) {
    muReference = logRatio(columns[roles.transmitted!], columns[roles.reference!], label(roles.transmitted!), label(roles.reference!), lines, file);
  } else if (has('muReference')) {
    muReference = Float64Array.from(columns[roles.muReference!]);
  }

  // ---- element and edge: the file's, or the options' where the file says nothing usable. An
  // option that contradicts a usable header field is refused: one of the two is wrong, and a
  // reduction or model of the wrong edge gives no error of its own.
  const headerSymbolText = fieldValue(doc.fields, 'Element.symbol');
  const headerSymbol = headerSymbolText !== undefined ? canonicalSymbol(headerSymbolText) : null;
  const givenSymbol = options.element !== undefined ? canonicalSymbol(options.element) : null;
  if (options.element !== undefined && givenSymbol === null) throw new InputError(`'${options.element}' is not an element symbol`, { key: 'element' });
  if (givenSymbol !== null && headerSymbol !== null && givenSymbol !== headerSymbol) {
    throw new InputError(`the element given (${givenSymbol}) clashes with the file's Element.symbol ${headerSymbol}; leave it out to use the file's`, { file, key: 'element' });
  }
  const element = givenSymbol ?? headerSymbol;
  const headerEdgeText = fieldValue(doc.fields, 'Element.edge');
  let headerEdge: EdgeName | null = null;
  if (headerEdgeText !== undefined) {
    const upper = headerEdgeText.trim().toUpperCase();
    if ((EDGE_NAMES as readonly string[]).includes(upper)) headerEdge = upper as EdgeName;
  }
  if (options.edge !== undefined && headerEdge !== null && options.edge !== headerEdge) {
    throw new InputError(`the edge given (${options.edge}) clashes with the file's Element.edge ${headerEdge}; leave it out to use the file's`, { file, key: 'edge' });
  }
  // a bare "L" is read as L3, the strongest L edge, unless an edge is given
  const edge: EdgeName | null = options.edge ?? headerEdge ?? (headerEdgeText?.trim().toUpperCase() === 'L' ? 'L3' : null);

  // ---- channels and ordering
  const channelMap: Record<string, Float64Array> = {};
  doc.labels.forEach((l, c) => {
    let name = l;
    for (let k = 2; channelMap[name] !== undefined; k++) name = `${l}_${k}`;
    channelMap[name] = c === energyIndex ? energy : columns[c];
  });
  let order: Int32Array | null = null;
  if (n > 1 && isStrictlyDecreasing(energy)) {
    order = Int32Array.from({ length: n }, (_, i) => n - 1 - i);
    const reason = 'the energies decrease through the whole scan; the scan was reversed';
    warnings.push(`${file}: ${reason}`);
    history.push({ step: 'reverse', reason });
  }
  const reorder = (a: Float64Array) => (order ? Float64Array.from(order, (i) => a[i]) : a);
  const roleLabels: Partial<Record<ColumnRole, string>> = {};
  for (const [r, i] of Object.entries(roles) as [ColumnRole, number][]) roleLabels[r] = label(i);
  if (!roleLabels.energy && roles.angle === undefined) roleLabels.energy = label(energyIndex);
  const channels: Record<string, Float64Array> = {};
  for (const [k, v] of Object.entries(channelMap)) channels[k] = reorder(v);
  return makeScan({
    energy: reorder(energy),
    mu: reorder(mu),
    muReference: muReference ? reorder(muReference) : null,
    channels,
    lines: order ? Int32Array.from(order, (i) => lines[i]) : lines,
    info: {
      file,
      sha256: doc.sha256,
      format: doc.format,
      element,
      edge,
      signal,
      muFormula,
      roles: roleLabels,
      energyAxis: axis,
      fields: doc.fields,
      comments: doc.comments,
      warnings,
      history,
    },
  });
}

function need(doc: SpectrumDocument, roles: Partial<Record<ColumnRole, number>>, wanted: ColumnRole[], signal: ScanSignal): void {
  const missing = wanted.filter((r) => roles[r] === undefined);
  if (missing.length > 0) {
    throw new InputError(
      `cannot form mu (${signal}): no column for ${missing.join(' and ')} among ${doc.labels.join(', ')}; name the columns with the columns option`,
      { file: doc.file },
    );
  }
}

function logRatio(numerator: Float64Array, denominator: Float64Array, numLabel: string, denLabel: string, lines: Int32Array, file: string): Float64Array {
  const out = new Float64Array(numerator.length);
  for (let i = 0; i < out.length; i++) {
    const a = numerator[i];
    const b = denominator[i];
    if (!(a > 0) || !(b > 0)) {
      const bad = !(a > 0) ? `${numLabel} is ${a}` : `${denLabel} is ${b}`;
      throw new InputError(`${bad}; ln(${numLabel}/${denLabel}) needs positive intensities`, { file, line: lines[i] });
    }
    out[i] = Math.log(a / b);
  }
  return out;
}

function isStrictlyDecreasing(a: Float64Array): boolean {
  for (let i = 1; i < a.length; i++) if (!(a[i] < a[i - 1])) return false;
  return true;
}

function energyUnit(
  values: Float64Array,
  columnUnit: string | null,
  label: string,
  option: 'eV' | 'keV' | undefined,
): { unit: 'eV' | 'keV'; source: EnergyAxisReport['source'] } {
  if (option) return { unit: option, source: 'option' };
  const u = columnUnit?.trim().toLowerCase();
  if (u === 'ev') return { unit: 'eV', source: 'column unit' };
  if (u === 'kev') return { unit: 'keV', source: 'column unit' };
  const l = label.toLowerCase();
  if (/kev/.test(l)) return { unit: 'keV', source: 'label' };
  if (/ev/.test(l)) return { unit: 'eV', source: 'label' };
  let min = Infinity;
  let max = -Infinity;
  for (const v of values) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  return max < 200 && max - min < 20 ? { unit: 'keV', source: 'values' } : { unit: 'eV', source: 'values' };
}
