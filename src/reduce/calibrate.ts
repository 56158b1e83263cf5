/**
 * Energy calibration from the reference channel: E0 of the reference absorber (usually a foil
 * of the same element measured downstream of the sample) is found like the sample's (maximum of
 * the smoothed derivative) and the whole energy axis is shifted so that it falls on the
 * tabulated edge energy (xraylib 4.0.0 edge energies, src/elements/table.ts). Common practice,
 * no source.
 */
import { InputError } from '../core/errors';
import { edgeOf } from '../elements/index';
import { shiftScanEnergy, type Scan } from '../read/spectrum/scan';
import { findE0 } from './edge';

export interface CalibrationResult {
  scan: Scan;
  /** Shift applied to every energy, eV (tabulated - measured). */
  shiftEv: number;
  /** E0 of the reference channel before the shift, eV. */
  referenceE0: number;
  tabulatedEdge: number;
  source: string;
}

export interface CalibrationOptions {
  /** Edge energy the reference should have, eV; default the tabulated edge of the scan's element. */
  referenceEdgeEv?: number;
  /** Derivative smoothing, eV; default 0.5. */
  smoothingEv?: number;
}

/**
 * Shift the scan so that its reference channel's E0 equals the tabulated edge.
 * @throws InputError when the scan has no reference channel or no known element and edge.
 */
export function calibrateScan(scan: Scan, options: CalibrationOptions = {}): CalibrationResult {
  const where = { file: scan.info.file ?? undefined, key: 'calibrate' };
  if (!scan.muReference) throw new InputError('energy calibration needs a reference channel (irefer or murefer column)', where);
  let tabulated = options.referenceEdgeEv;
  let source = 'given';
  if (tabulated === undefined) {
    if (!scan.info.element || !scan.info.edge) throw new InputError('energy calibration needs the element and edge (or a reference edge energy)', where);
    tabulated = edgeOf(scan.info.element, scan.info.edge).energy;
    source = `tabulated ${scan.info.element} ${scan.info.edge} edge (xraylib 4.0.0)`;
  }
  if (tabulated < scan.energy[0] || tabulated > scan.energy[scan.energy.length - 1]) {
    throw new InputError(`the reference edge ${tabulated} eV lies outside the scan (${scan.energy[0]}-${scan.energy[scan.energy.length - 1]} eV)`, where);
  }
  const referenceE0 = findE0(scan.energy, scan.muReference, { smoothingEv: options.smoothingEv ?? 0.5 }).value;
  const shiftEv = tabulated - referenceE0;
  const shifted = shiftScanEnergy(scan, shiftEv, { step: 'calibrate', shiftEv, referenceE0, tabulatedEdge: tabulated, source });
  return { scan: shifted, shiftEv, referenceE0, tabulatedEdge: tabulated, source };
}
