/**
 * Window settings that have no meaning, refused before any computation: a k-weight given twice
 * (the same residual rows twice) and a taper wider than its range (rise and fall would overlap).
 * Bounds: common practice, no source.
 */
import { InputError } from '../../core/errors';

export interface WindowCheck {
  kRange: readonly [number, number];
  weights: readonly number[];
  kTaper: number;
  rRange: readonly [number, number];
  rTaper: number;
}

/** @throws InputError naming the option (`--kw`, `--taper`, `--r-taper`). */
export function checkWindowSettings(d: WindowCheck): void {
  const seen = new Set<number>();
  for (const w of d.weights) {
    if (seen.has(w)) throw new InputError(`k-weight ${w} is given twice`, { key: '--kw' });
    seen.add(w);
  }
  if (d.kTaper > d.kRange[1] - d.kRange[0]) throw new InputError(`a taper of ${d.kTaper} 1/Å is wider than the k range ${d.kRange[0]}:${d.kRange[1]}`, { key: '--taper' });
  if (d.rTaper > d.rRange[1] - d.rRange[0]) throw new InputError(`a taper of ${d.rTaper} Å is wider than the R range ${d.rRange[0]}:${d.rRange[1]}`, { key: '--r-taper' });
}
