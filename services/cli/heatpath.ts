#!/usr/bin/env node
import { RESULT_CAUTION } from '../../shared/analysis/result-caution.js';
import { isUserError, userErrorLine } from './user-error-line.js';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { fileErrorReason } from '../store/file-error-reason.js';
import { HEATPATH_VERSION } from '../../shared/analysis/algorithm-version.js';
import { runAnalyzeCommand } from './analyze-command.js';
import { runCalibrateCommand } from './calibrate-command.js';
import { runDegradationCommand } from './degradation-command.js';
import { runReprocessCommand } from './reprocess-command.js';
import { runRthjcCommand } from './rthjc-command.js';
import { runSubmitCommand } from './submit-command.js';
import { closestName } from '../../shared/input/closest-name.js';

const overview = `heatpath ${HEATPATH_VERSION}: thermal transient analysis

Commands:
  heatpath analyze FILE...        Zth, spectrum, Foster/Cauer, structure functions, compact model
  heatpath calibrate POINTS.csv   fit a TSP calibration (temperature vs voltage)
  heatpath rthjc FILE_A FILE_B    Rth-JC by two interfaces (transient dual interface, JESD51-14)
  heatpath degradation FILE...    structure-function shift and Rth rise over power cycling
  heatpath submit FILE...         upload transients to a heatpath service (bench scripts)
  heatpath reprocess DIR          analyse an archive folder, on a service or --local

Run \`heatpath COMMAND --help\` for the options of a command.

Caution: ${RESULT_CAUTION}`;

type Command = (argv: string[], print: (text: string) => void) => Promise<number>;

const commands: Record<string, Command> = {
  analyze: runAnalyzeCommand,
  calibrate: runCalibrateCommand,
  rthjc: runRthjcCommand,
  degradation: runDegradationCommand,
  submit: runSubmitCommand,
  reprocess: runReprocessCommand,
};

/** Exit codes: 0 done, 2 the user must fix something (one line on stderr), 1 an internal failure. */
async function main(argv: string[]): Promise<number> {
  const [name, ...rest] = argv;
  const print = (text: string) => process.stdout.write(text.endsWith('\n') ? text : text + '\n');
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    print(overview);
    return name === undefined ? 2 : 0;
  }
  if (name === '--version') {
    print(HEATPATH_VERSION);
    return 0;
  }
  const command = commands[name];
  if (!command) {
    const meant = closestName(name, Object.keys(commands));
    process.stderr.write(`heatpath: unknown command "${name.slice(0, 40)}".${meant ? ` Did you mean \`heatpath ${meant}\`?` : ''} Run \`heatpath --help\` for the commands.\n`);
    return 2;
  }
  try {
    return await command(rest, print);
  } catch (error) {
    if (isUserError(error)) {
      process.stderr.write(userErrorLine(name, error) + '\n');
      return 2;
    }
    process.stderr.write(`heatpath ${name}: internal error: ${(error as Error)?.stack ?? String(error)}\nPlease report this with the input file.\n`);
    return 1;
  }
}

// A reader that stops early (`heatpath analyze ... | head`) closes the pipe: drop
// the rest of the printout, as Unix tools do, but finish the run, so files
// written with --out are complete. Any other failure to write the printout (a
// full disk, an I/O error) also drops the rest and finishes the run, and is one
// user error line on stderr with exit code 2: the printout is incomplete.
let printoutFailed = false;
process.stdout.on('error', (error: NodeJS.ErrnoException) => {
  if (error.code === 'EPIPE' || error.code === 'ERR_STREAM_DESTROYED' || printoutFailed) return;
  printoutFailed = true;
  const failure = new HeatpathError('FILE_NOT_WRITABLE', `${fileErrorReason(error, 'write')}; the printout is incomplete`, { file: 'standard output' });
  process.stderr.write(userErrorLine(process.argv[2] ?? '', failure) + '\n');
  if (process.exitCode === 0) process.exitCode = 2; // the run had finished
});

const exitCode = await main(process.argv.slice(2));
process.exitCode = printoutFailed && exitCode === 0 ? 2 : exitCode;
