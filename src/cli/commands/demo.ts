/**
 * `shellrank demo [--out DIR]`: the bundled demo on the invented scenario of structures/
 * (where does Ni sit in a Ni-doped spinel support?). For now it lists the shells of every
 * candidate and simulates its spectrum; it writes the files into DIR and prints where they are.
 */
import type { Command } from 'commander';
import { readdirSync } from 'node:fs';
import { basename, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeFileAtomic } from '../../core/files';
import { loadStructureFile } from '../../read/load-structure';
import { shellsOfStructure } from '../../paths/index';
import { simulateSpectrum } from '../../model/simulate';
import { defaultProviders, DEFAULT_PROVIDER } from '../../scatter/registry';
import type { CliIo } from '../io';
import { textTable, toJson } from '../output';
import { shellsDocument } from './shells';
import { simulateCsv, simulateDocument } from './simulate';

/** Folder of the bundled demo structures. */
export const DEMO_STRUCTURES = fileURLToPath(new URL('../../../structures/', import.meta.url));

export function registerDemo(program: Command, io: CliIo): void {
  program.command('demo')
    .description('run the bundled demo (invented scenario: Ni sites in a doped spinel) and write its results')
    .option('--out <dir>', 'output folder', 'demo-output')
    .action((raw: { out: string }) => {
      const outDir = resolve(io.cwd, raw.out);
      const provider = defaultProviders().get(DEFAULT_PROVIDER);
      const files = readdirSync(DEMO_STRUCTURES).filter((f) => f.endsWith('.xyz')).sort();
      const summary: (string | number)[][] = [];
      for (const name of files) {
        const path = join(DEMO_STRUCTURES, name);
        const loaded = loadStructureFile(path);
        const set = shellsOfStructure(loaded.frames[0], { absorber: { index: 0 }, radius: 6, tolerance: 0.02, structureHash: loaded.sha256 });
        const sim = simulateSpectrum(set, provider, { disorder: { kind: 'fixed', msrd: 0.005 } });
        const stem = basename(name, '.xyz');
        writeFileAtomic(join(outDir, `${stem}.shells.json`), toJson(shellsDocument(set, path), 8), [path]);
        writeFileAtomic(join(outDir, `${stem}.simulated.csv`), simulateCsv(sim), [path]);
        writeFileAtomic(join(outDir, `${stem}.simulated.json`), toJson(simulateDocument(sim, set, path), 8), [path]);
        const first = set.paths[0];
        summary.push([stem, set.paths.length, `${first.degeneracy} ${first.scatterer} at ${first.r.toFixed(3)} Å`]);
      }
      io.stdout('shellrank demo (invented scenario: where does Ni sit in a Ni-doped MgAl2O4 spinel?)\n\n');
      io.stdout(textTable(['candidate', 'shells', 'first shell'], summary));
      io.stdout(`\nscattering provider: ${provider.name}${provider.name === 'parametric' ? ' (approximate, for demonstration only)' : ''}\n`);
      io.stdout(`wrote shells (*.shells.json) and simulated spectra (*.simulated.csv, *.simulated.json) to ${outDir}\n`);
    });
}
