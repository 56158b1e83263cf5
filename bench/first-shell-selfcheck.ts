/**
 * Self-check of the first-shell R-space fit of bench/measured-first-shell.ts (same model, window
 * and free parameters, through ./first-shell-lib): each measured chi(k) is replaced by a noise-free
 * chi simulated with first-principles tables of the crystal scaled so that the first shell lies at
 * R_0 + shift (the truth, s0sq 0.9, e0 3 eV, msrd 0.007 Å^2), then fitted with the tables of the
 * unscaled crystal (R_0). With shift = 0 the fit must return dR = 0 (the pipeline adds no bias);
 * with shift != 0 it returns the shift times the ratio of the tables' propagation slope 2 k_int
 * to the model's 2 k (measured 1.007: the model's 2qR term carries the R dependence with q in
 * place of k_int, harmless at the table's own distance). A measuring tool.
 * Run: npx tsx bench/first-shell-selfcheck.ts [--shift 0.02] [--settings JSON]
 */
import { evaluateModel } from '../src/model/exafs';
import { firstPrinciplesProvider } from '../src/scatter/provider-first-principles';
import { fitShells, measuredChi, SAMPLES, shellsAndTables } from './first-shell-lib';

const args = process.argv.slice(2);
const option = (name: string) => { const i = args.indexOf(name); return i >= 0 ? args[i + 1] : undefined; };
const shift = Number(option('--shift') ?? 0);
const settings = JSON.parse(option('--settings') ?? '{}');
const provider = firstPrinciplesProvider({ cache: false, settings });
const rows = SAMPLES.filter((s) => s.name !== 'Fe').map((s) => {
  const { k } = measuredChi(s);
  const r0 = (() => shellsAndTables(s, provider, s.a, true).shells[0].r)();
  const truth = shellsAndTables(s, provider, s.a * (1 + shift / r0), true);
  const model = shellsAndTables(s, provider, s.a, true);
  const chi = evaluateModel(k, truth.tables, { s0sq: 0.9, e0: 3, paths: [{ n: truth.shells[0].degeneracy, r: truth.shells[0].r, msrd: 0.007, c3: 0, c4: 0 }] }).chi;
  const f = fitShells(s, k, chi, model.shells, model.tables);
  return { sample: s.name, shift, dR: +f.dR.toFixed(5), ratio: shift ? +(f.dR / shift).toFixed(4) : null, s0sq: +f.s0sq.toFixed(4), e0: +f.e0.toFixed(3), msrd: +f.msrd[0].toFixed(5) };
});
console.log(JSON.stringify({ benchmark: 'first-shell-selfcheck', settings, rows }, null, 1));
