/**
 * XDI output of normalised data: energy, mu, pre-edge line, post-edge polynomial, background,
 * normalised and detrended mu as columns of an XDI 1.0 file (src/read/spectrum/xdi.ts), with the
 * source file's metadata fields kept and the reduction's choices in a `Reduction` family.
 */
import { formatXdi } from '../read/spectrum/xdi';
import type { Chi } from './chi';

/** The XDI text of a reduced spectrum's normalised data. @throws RangeError when the Chi has none. */
export function normalisedToXdi(chi: Chi): string {
  const n = chi.normalised;
  if (!n) throw new RangeError('this reduced spectrum carries no normalised mu(E)');
  const fields: Record<string, string> = {};
  for (const [key, value] of Object.entries(chi.info.source?.fields ?? {})) {
    if (/^column\./i.test(key) || /^reduction\./i.test(key)) continue;
    fields[key] = value;
  }
  if (chi.element) fields['Element.symbol'] = chi.element;
  if (chi.edge) fields['Element.edge'] = chi.edge;
  const r = chi.info.reduction as Record<string, any>;
  fields['Reduction.e0'] = `${chi.e0} eV`;
  fields['Reduction.e0_method'] = String(r.e0?.method ?? 'unknown');
  fields['Reduction.edge_step'] = String(chi.edgeStep);
  if (r.preEdge) fields['Reduction.pre_edge'] = `${r.preEdge.used[0]} ${r.preEdge.used[1]} eV from E0, order ${r.preEdge.order}`;
  if (r.postEdge) fields['Reduction.post_edge'] = `${r.postEdge.used[0]} ${r.postEdge.used[1]} eV from E0, order ${r.postEdge.order}`;
  if (r.background) fields['Reduction.background_cutoff'] = `${r.background.cutoffR} Angstrom`;
  if (chi.info.source?.sha256) fields['Reduction.source_sha256'] = chi.info.source.sha256;
  if (chi.info.provenance) fields['Reduction.provenance_id'] = chi.info.provenance.id;
  const signal = chi.info.source?.signal === 'fluorescence' ? 'fluor' : 'trans';
  return formatXdi({
    fields,
    comments: 'normalised mu(E) written by shellrank reduce',
    labels: ['energy', `mu${signal}`, 'pre_edge', 'post_edge', 'background', `norm${signal}`, 'detrended'],
    units: ['eV', null, null, null, null, null, null],
    columns: [n.energy, n.mu, n.preEdge, n.postEdge, n.background, n.normalised, n.detrended],
  });
}
