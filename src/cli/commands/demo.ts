/**
 * `shellrank demo [--out DIR]`: the whole job on the bundled, invented scenario of structures/
 * (where does Ni sit in a Ni-doped MgAl2O4 spinel support?): reduce the synthetic "measured"
 * spectrum, rank the eight candidate structures plus the two-site mixture, and write the HTML
 * report with its JSON, tables and plots. The demo composes the `reduce`, `rank` and `report`
 * commands exactly as a user would type them, so it shows what they do.
 */
import type { Command } from 'commander';
import { join, relative, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ComputationError } from '../../core/errors';
import type { CliIo } from '../io';
import { shellCommand } from '../shell-quote';

/** Folder of the bundled demo structures and data. */
export const DEMO_STRUCTURES = fileURLToPath(new URL('../../../structures/', import.meta.url));
export const DEMO_DATA = join(DEMO_STRUCTURES, 'demo-data', 'ni-spinel-sample.xdi');

export function registerDemo(program: Command, io: CliIo): void {
  program.command('demo')
    .description('run the bundled demo (invented scenario: Ni sites in a doped spinel): reduce, rank, report')
    .option('--out <dir>', 'output folder', 'demo-output')
    .action(async (raw: { out: string }) => {
      // imported here: main.ts imports this module through the command list
      const { runCli } = await import('../main');
      const outDir = resolve(io.cwd, raw.out);
      const show = (p: string) => relative(io.cwd, p) || '.';
      // paths as the user would type them, relative to the working folder
      const data = show(DEMO_DATA);
      const structures = show(DEMO_STRUCTURES);
      const octahedral = show(join(DEMO_STRUCTURES, 'ni-spinel-octahedral.xyz'));
      const nio = show(join(DEMO_STRUCTURES, 'nio-rocksalt.xyz'));
      const out = (name: string) => show(join(outDir, name));
      const steps: { title: string; args: string[] }[] = [
        { title: 'reduce the synthetic spectrum', args: ['reduce', data, '--out', out('chi.json'), '--plot', out('reduction.svg')] },
        {
          // S0^2 fixed, as if calibrated on a reference compound: the candidates differ in
          // coordination number, which a free S0^2 would absorb
          title: 'rank the candidates',
          args: ['rank', out('chi.json'), structures, '--absorber', '#0', '--tolerance', '0.02', '--s0sq', '0.85',
            '--mixture', `${octahedral},${nio}`, '--out', out('ranking'), '--quiet'],
        },
        { title: 'write the report', args: ['report', out('ranking/ranking.json'), '--out', out('.')] },
      ];
      io.stdout('shellrank demo — an invented scenario: where does Ni sit in a Ni-doped MgAl2O4 spinel support?\n');
      io.stdout(`The "measured" spectrum ${data} is SYNTHETIC (scripts/make-demo-spectrum.ts).\n\n`);
      for (const step of steps) {
        io.stdout(`$ ${shellCommand(['shellrank', ...step.args])}\n`);
        const code = await runCli(step.args, { ...io, stdout: (t) => io.stdout(t), stderr: (t) => io.stderr(t) });
        if (code !== 0) throw new ComputationError(`the demo step '${step.title}' failed (exit ${code})`);
        io.stdout('\n');
      }
      io.stdout(`report: ${join(outDir, 'report.html')}\n`);
    });
}
