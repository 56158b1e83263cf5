/** `shellrank report RESULT.json [--out DIR]`: the HTML report, tables and plots of a fit or rank result. */
import { basename, dirname, join, resolve } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { readTextFile } from '../../core/files';
import { writeReport } from '../../report/index';
import { COLUMN_WIDTH_INCHES, type ColumnWidth } from '../../report/plots';
import type { CliIo } from '../io';
import { parseInteger, parseNumber } from '../options';

interface ReportCliOptions {
  out?: string;
  top: string;
  png: boolean;
  dpi: string;
  width: string;
}

/** Parse JSON text; InputError naming the file and the line of a syntax error. */
export function parseResultJson(text: string, file: string): unknown {
  try {
    return JSON.parse(text);
  } catch (e) {
    const message = e instanceof Error ? e.message : String(e);
    const position = /position (\d+)/.exec(message);
    const line = position ? text.slice(0, Number(position[1])).split('\n').length : undefined;
    throw new InputError(`not valid JSON (${message.replace(/\s+/g, ' ').slice(0, 120)})`, { file, line });
  }
}

export function registerReport(program: Command, io: CliIo): void {
  program
    .command('report')
    .description('write the HTML report, tables and plots of a fit or rank result')
    .argument('<result>', 'a fit or rank result (JSON)')
    .option('--out <dir>', 'folder for report.html and its files (default: RESULT-report beside the result)')
    .option('--top <n>', 'candidates drawn in the overlay plots', '3')
    .option('--no-png', 'write SVG plots only')
    .option('--dpi <dpi>', 'PNG density', '300')
    .option('--width <column>', `plot width: ${Object.keys(COLUMN_WIDTH_INCHES).join(', ')} or inches`, 'single')
    .action(async (file: string, raw: ReportCliOptions) => {
      const path = resolve(io.cwd, file);
      const text = readTextFile(path);
      const document = parseResultJson(text, file);
      const width: ColumnWidth | number = raw.width in COLUMN_WIDTH_INCHES ? (raw.width as ColumnWidth) : parseNumber('--width', raw.width, { min: 1, max: 20 });
      const outDir = raw.out !== undefined ? resolve(io.cwd, raw.out) : join(dirname(path), `${basename(path).replace(/\.json$/i, '')}-report`);
      const written = await writeReport(document, outDir, {
        top: parseInteger('--top', raw.top, 1),
        png: raw.png,
        dpi: parseNumber('--dpi', raw.dpi, { min: 30, max: 2400 }),
        width,
        inputFile: { path: file, text },
        protectedInputs: [path],
      }).catch((e: unknown) => {
        if (e instanceof InputError && e.file === undefined) throw e.withLocation({ file });
        throw e;
      });
      io.stdout(`wrote ${written.html} (${written.kind} report, ${written.files.length} files)\n`);
      for (const w of written.warnings) io.stderr(`shellrank: note: ${w}\n`);
    });
}
