/**
 * The absorbing element and edge of a model compared with measured data: what the user gave,
 * else what the data say (the XDI fields Element.symbol and Element.edge, carried from the scan
 * into the Chi and into a saved reduction), else the K edge for data that name no edge.
 *
 * A given edge that differs from the data's is refused rather than obeyed: the absorber's phase
 * shift differs between a K (final p state) and an L3 edge (final d state), so a model of the
 * wrong edge fits with distances off by tenths of an ångström without saying so.
 */
import { InputError } from '../../core/errors';
import type { EdgeName } from '../../elements/index';
import type { Chi } from '../../reduce/chi';
import type { AbsorberSelector } from '../../structure/cluster';

export interface AbsorberAndEdge {
  absorber: AbsorberSelector;
  edge: EdgeName;
  /** Where each came from, for reports. */
  source: { absorber: 'given' | 'data'; edge: 'given' | 'data' | 'default' };
}

/**
 * @param given what the user typed (either may be missing)
 * @param file the data file, named in errors
 * @param names how the user spells the two settings (command-line options, or study keys)
 * @throws InputError when the given edge clashes with the data's, or when no absorber is given
 *   and the data name none
 */
export function absorberAndEdgeFromData(chi: Pick<Chi, 'element' | 'edge'>, given: { absorber?: AbsorberSelector; edge?: EdgeName }, file: string, names = { absorber: '--absorber', edge: '--edge' }): AbsorberAndEdge {
  // a study file locates its own key (file, line, key path); only options go into the location
  const key = (name: string) => (name.startsWith('--') ? name : undefined);
  if (given.edge !== undefined && chi.edge && given.edge !== chi.edge) {
    throw new InputError(`${names.edge} ${given.edge} clashes with the data's edge ${chi.edge}${chi.element ? ` (a ${chi.element} ${chi.edge} spectrum)` : ''}; leave ${names.edge} out to use the data's`, { file, key: key(names.edge) });
  }
  let absorber = given.absorber;
  if (absorber === undefined) {
    if (!chi.element) throw new InputError(`the data do not name the absorbing element (no Element.symbol): give ${names.absorber}`, { file, key: key(names.absorber) });
    absorber = { element: chi.element };
  }
  const edge: EdgeName = given.edge ?? chi.edge ?? 'K';
  return {
    absorber,
    edge,
    source: { absorber: given.absorber !== undefined ? 'given' : 'data', edge: given.edge !== undefined ? 'given' : chi.edge ? 'data' : 'default' },
  };
}
