/**
 * `shellrank scatter ABSORBER SCATTERER --r 2.5`: first-principles effective amplitude, total phase
 * and mean free path of one absorber-scatterer pair on a k grid (table, JSON or SVG plot).
 */
import type { Command } from 'commander';
import { resolve } from 'node:path';
import { writeFileAtomic } from '../../core/files';
import { elementBySymbol, parseEdge } from '../../elements/index';
import { renderLinePanels } from '../../report/svg-lines';
import { InputError } from '../../core/errors';
import { EXCHANGE_MODELS, type ExchangeModel } from '../../scatter/exchange';
import { DEFAULT_FIRST_PRINCIPLES_SETTINGS } from '../../scatter/first-principles';
import { firstPrinciplesProvider } from '../../scatter/provider-first-principles';
import type { CliIo } from '../io';
import { emit, textTable, toJson } from '../output';
import { parseNumber } from '../options';

interface ScatterCliOptions {
  r: string;
  edge: string;
  kMax: string;
  kStep: string;
  overlap: string;
  selfEnergy: string;
  json?: boolean;
  plot?: string;
  cache: boolean;
  out?: string;
}

export function registerScatter(program: Command, io: CliIo): void {
  program
    .command('scatter')
    .description('compute first-principles scattering functions (effective amplitude |F(k)|, total phase, mean free path) of one absorber-scatterer pair')
    .argument('<absorber>', 'absorbing element, e.g. Cu')
    .argument('<scatterer>', 'scattering element, e.g. O')
    .requiredOption('--r <angstrom>', 'absorber-scatterer distance, Å')
    .option('--edge <edge>', 'absorption edge (K, L1, L2, L3)', 'K')
    .option('--k-max <invA>', 'largest k of the grid, 1/Å', '20')
    .option('--k-step <invA>', 'k grid step, 1/Å', '0.25')
    .option('--overlap <fraction>', 'muffin-tin sphere overlap', '0.1')
    .option('--self-energy <model>', `photoelectron self-energy model (${EXCHANGE_MODELS.join(', ')})`, DEFAULT_FIRST_PRINCIPLES_SETTINGS.exchange)
    .option('--json', 'write JSON {"k", "amplitude", "phase", "meanFreePath", ...}')
    .option('--plot <file.svg>', 'also write an SVG plot of the three functions')
    .option('--no-cache', 'neither read nor write the scattering cache')
    .option('--out <file>', 'write to this file instead of the terminal')
    .action((absorberText: string, scattererText: string, raw: ScatterCliOptions) => {
      const absorber = elementBySymbol(absorberText).symbol;
      const scatterer = elementBySymbol(scattererText).symbol;
      const edge = parseEdge(raw.edge);
      const distance = parseNumber('--r', raw.r, { min: 0.5, max: 20 });
      const kMax = parseNumber('--k-max', raw.kMax, { min: 1, max: 30 });
      const kStep = parseNumber('--k-step', raw.kStep, { min: 0.001, max: 5 });
      const overlap = parseNumber('--overlap', raw.overlap, { min: 0, max: 0.4 });
      const exchange = raw.selfEnergy as ExchangeModel;
      if (!EXCHANGE_MODELS.includes(exchange)) throw new InputError(`must be one of ${EXCHANGE_MODELS.join(', ')}, got '${raw.selfEnergy}'`, { key: '--self-energy' });
      const n = Math.floor(kMax / kStep + 1e-9) + 1;
      const k = new Float64Array(n).map((_, i) => Number((i * kStep).toPrecision(12)));
      const provider = firstPrinciplesProvider({ cache: raw.cache, settings: { overlap, exchange } });
      const table = provider.compute({ absorber, scatterer, edge, distance, k });
      if (raw.plot !== undefined) {
        const svg = renderLinePanels(
          [
            { title: `${absorber} ${edge}-edge, ${scatterer} at ${distance} Å`, xLabel: 'k (1/Å)', yLabel: '|F(k)| (Å)', series: [{ label: '|F(k)|', x: k, y: table.amplitude }] },
            { title: 'total phase', xLabel: 'k (1/Å)', yLabel: 'phase (rad)', series: [{ label: 'phase', x: k, y: table.phase }] },
            { title: 'mean free path', xLabel: 'k (1/Å)', yLabel: 'lambda (Å)', series: [{ label: 'lambda', x: k, y: table.meanFreePath }] },
          ],
          { title: 'shellrank scatter' },
        );
        writeFileAtomic(resolve(io.cwd, raw.plot), svg);
      }
      if (raw.json) {
        const doc = { absorber, scatterer, edge, distance, k, amplitude: table.amplitude, phase: table.phase, meanFreePath: table.meanFreePath, info: table.info };
        emit(io, toJson(doc), raw.out, []);
        return;
      }
      const rows = Array.from(k, (kv, i) => [kv.toFixed(2), table.amplitude[i].toFixed(5), table.phase[i].toFixed(5), table.meanFreePath[i].toFixed(3)]);
      const header = `# ${absorber} ${edge}-edge absorber, ${scatterer} scatterer at ${distance} Å; provider ${table.info.provider} (${table.info.hash})\n` +
        `# phase = 2 delta_c - l pi + arg F; values below k = ${String(table.info.settings.kFloor)} 1/Å are held at that k\n`;
      emit(io, header + textTable(['k (1/Å)', '|F(k)| (Å)', 'phase (rad)', 'lambda (Å)'], rows), raw.out, []);
    });
}
