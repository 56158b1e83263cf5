/**
 * The default refinement recipe (what `fit` does without a study file): one group per
 * shell whose structure distance is at most rMax + pathMargin (|chi(R)| peaks sit about 0.3-0.5 Å
 * below the bond length because of the phase shift; common practice, no source); per group `r` and
 * `msrd` free and `n` fixed at the structure's degeneracy; one `e0`, free; `s0sq` fixed at a given
 * value (0.9 by default, common practice, no source) or free. c3 and c4 fixed at 0.
 *
 * Parameter names: `s0sq`, `e0`, and per shell `n_<id>`, `r_<id>`, `msrd_<id>`, `c3_<id>`,
 * `c4_<id>` where <id> is the shell id with the dot replaced ("Cu.1" -> "Cu_1").
 */
import { InputError } from '../../core/errors';
import type { PathSet, ScatteringPath } from '../../paths/pathset';
import type { ParameterSpec } from '../parameters';
import type { PathRule } from './problem';

export interface RecipeOptions {
  rMax: number;
  /** Include shells with r0 <= rMax + pathMargin (Å; default 0.5). */
  pathMargin?: number;
  /** 'free', or a fixed value of S0^2 (default 0.9). */
  s0sq?: number | 'free';
  /** Start value of msrd, Å^2 (default 0.005). */
  msrdStart?: number;
  /** Vary c3 per shell too (default false). */
  freeC3?: boolean;
}

export interface Recipe {
  parameters: ParameterSpec[];
  paths: ScatteringPath[];
  rules: PathRule[];
  description: string[];
}

/** Parameter-name form of a shell id. */
export function groupName(id: string): string {
  return id.replace(/[^A-Za-z0-9]/g, '_');
}

export function defaultRecipe(pathSet: PathSet, options: RecipeOptions): Recipe {
  const margin = options.pathMargin ?? 0.5;
  const paths = pathSet.paths.filter((p) => p.r <= options.rMax + margin);
  if (paths.length === 0) {
    throw new InputError(`no shell of the structure lies within ${(options.rMax + margin).toFixed(2)} Å of the absorber (R range ends at ${options.rMax} Å)`, { key: '--r' });
  }
  const s0sq = options.s0sq ?? 0.9;
  const parameters: ParameterSpec[] = [
    s0sq === 'free' ? { name: 's0sq', value: 0.9, lower: 0.05, upper: 3 } : { name: 's0sq', value: s0sq, state: 'fixed' },
    { name: 'e0', value: 0, lower: -30, upper: 30 },
  ];
  const rules: PathRule[] = [];
  for (const p of paths) {
    const g = groupName(p.id);
    parameters.push(
      { name: `n_${g}`, value: p.degeneracy, state: 'fixed' },
      { name: `r_${g}`, value: p.r, lower: p.r - 0.5, upper: p.r + 0.5 },
      { name: `msrd_${g}`, value: options.msrdStart ?? 0.005, lower: -0.01, upper: 0.1 },
      options.freeC3 ? { name: `c3_${g}`, value: 0, lower: -0.01, upper: 0.01 } : { name: `c3_${g}`, value: 0, state: 'fixed' },
      { name: `c4_${g}`, value: 0, state: 'fixed' },
    );
    rules.push({ n: `n_${g}`, r: `r_${g}`, msrd: `msrd_${g}`, c3: `c3_${g}`, c4: `c4_${g}` });
  }
  const description = [
    `${paths.length} shell${paths.length === 1 ? '' : 's'} with r0 <= ${(options.rMax + margin).toFixed(2)} Å, one group each`,
    `per group: r and msrd free, n fixed at the structure's degeneracy${options.freeC3 ? ', c3 free' : ''}`,
    `e0 free; s0sq ${s0sq === 'free' ? 'free' : `fixed at ${s0sq}`}`,
  ];
  return { parameters, paths, rules, description };
}
