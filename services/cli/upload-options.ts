import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { readCycleCount } from '../../shared/input/cycle-count.js';
import { decimalPointSpelling } from '../../shared/input/decimal-number-text.js';
import { metadataNumber } from '../../shared/input/metadata-number.js';
import { POWER_KEYS } from '../../shared/input/transient-file.js';
import { UploadQuerySchema } from '../api/schemas/transient-metadata.js';
import { numberOption } from './cli-arguments.js';
import { PARAMETER_OPTIONS } from './command-line-spelling.js';
import type { UploadTarget } from './post-to-server.js';

/**
 * Options of the commands that upload to a server, and the upload query
 * parameter each one becomes. Values go to the server as given, but for the
 * spellings the command line accepts beyond the server's (serverSpelling): the
 * service validates them (one place for the rules) and answers a bad one with 400.
 */
const METADATA_OPTIONS = {
  sample: 'sample_id',
  bench: 'bench',
  channel: 'channel',
  'cycle-count': 'cycle_count',
  'power-w': 'power_W',
  'current-a': 'current_A',
  'voltage-v': 'voltage_V',
  'calibration-id': 'calibration_id',
  kind: 'kind',
  method: 'method',
  ...PARAMETER_OPTIONS,
} as const;

export const uploadOptionSpecs = {
  server: { type: 'string' },
  key: { type: 'string' },
  retries: { type: 'string' },
  tag: { type: 'string', multiple: true },
  ...Object.fromEntries(Object.keys(METADATA_OPTIONS).map((name) => [name, { type: 'string' }])),
} as const;

/** Help text of the upload options; `sampleHelp` says what --sample means to the command. */
export function uploadOptionsUsage(sampleHelp = 'LIMS sample id'): string {
  return `  --server URL            the heatpath service, e.g. http://heatpath.lab:8080
  --key TOKEN             API key (role bench or admin)
  --sample ID             ${sampleHelp}
  --bench B --channel C --tag T (repeatable)
  --cycle-count N         power cycles the device had seen, digits only (40000)
  --power-w P | --current-a I --voltage-v V
  --calibration-id ID     a calibration stored on the server
  --kind, --method, --points-per-decade, --early-start-s, --early-end-s,
  --compact-stages        analysis parameters (as for heatpath analyze)
  --retries N             attempts per file when the server is busy or away (default 5)`;
}

/** Server, key and attempts from the options; CLI_USAGE when one is missing. */
export function uploadTargetFrom(values: Record<string, unknown>, command: string): UploadTarget {
  const server = values.server as string | undefined;
  const key = values.key as string | undefined;
  if (!server || !key) throw new HeatpathError('CLI_USAGE', `heatpath ${command} needs --server URL and --key TOKEN`);
  try {
    new URL(server);
  } catch {
    throw new HeatpathError('CLI_USAGE', `--server must be a URL such as http://heatpath.lab:8080, got "${server.slice(0, 60)}"`);
  }
  const attempts = numberOption('retries', values.retries as string | undefined, { positive: true, integer: true }) ?? 5;
  return { server, key, attempts };
}

/** Parameters whose values are choices of lower-case words. */
const CHOICE_PARAMETERS: ReadonlySet<string> = new Set(['kind', 'method']);
/** Parameters the service reads as numbers; the others (ids, names) are text and go exactly as given. */
const NUMBER_PARAMETERS: ReadonlySet<string> = new Set(
  Object.entries(UploadQuerySchema.properties)
    .filter(([, schema]) => ['number', 'integer'].includes((schema as { type?: string }).type ?? ''))
    .map(([name]) => name),
);

/**
 * A value as the server reads it, where the command line is more lenient (as
 * `analyze` is): a decimal comma becomes a point (`51,3`; an ambiguous `1,250`
 * is refused, decimal-number-text.ts), a choice lower case (`Cooling`), a power
 * loses the unit after it (`60W`, as a `# power_W:` line is read).
 * Anything else goes as given, for the server to judge, but the cycle count:
 * its comma or point separates thousands, so it is read here as digits only
 * and refused before any file is sent, naming the option.
 */
function serverSpelling(option: string, parameter: string, value: string): string {
  if (CHOICE_PARAMETERS.has(parameter)) return value.trim().toLowerCase();
  if (parameter === 'cycle_count') return String(readCycleCount(value, '--cycle-count'));
  if (POWER_KEYS.has(parameter)) {
    // As analyze reads it, and the file's header line: `60W` is 60.
    const power = metadataNumber(parameter, value, `--${option}`);
    if (Number.isFinite(power)) return String(power);
  }
  if (NUMBER_PARAMETERS.has(parameter)) return decimalPointSpelling(value, `--${option}`);
  return value;
}

/** The upload query parameters the options give. */
export function uploadMetadataFrom(values: Record<string, unknown>): URLSearchParams {
  const query = new URLSearchParams();
  for (const [option, parameter] of Object.entries(METADATA_OPTIONS)) {
    const value = values[option];
    if (typeof value === 'string') query.set(parameter, serverSpelling(option, parameter, value));
  }
  for (const tag of (values.tag as string[] | undefined) ?? []) query.append('tags', tag);
  return query;
}
