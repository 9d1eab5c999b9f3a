/**
 * The analysis parameters whose command-line option is spelt otherwise than the parameter, option -> parameter.
 * Messages are shared by the command line and the service and name a parameter as the service and the result's
 * provenance do (`early_time_start_s`); the command line names it by its option (`--early-start-s`) where it prints
 * them (commandLineSpelling). `kind` and `method` are spelt alike on both (`kind heating` is printed `--kind heating`).
 */
export const PARAMETER_OPTIONS = {
  'points-per-decade': 'points_per_decade',
  'early-start-s': 'early_time_start_s',
  'early-end-s': 'early_time_end_s',
  'compact-stages': 'compact_stages',
} as const;

/**
 * `parameter early_time_start_s` (an error's location), `early_time_start_s = 1e-9` and a bare `early_time_start_s`,
 * each with its option; `kind heating` (a kind named with its value: a bare "kind" is a word of prose) as `--kind heating`.
 */
const SPELLINGS = [
  ...Object.entries(PARAMETER_OPTIONS).map(([option, parameter]) => ({
    pattern: new RegExp(`(parameter )?\\b${parameter}\\b( = )?`, 'g'),
    spelling: (_: string, location: string | undefined, equals: string | undefined) => `${location ? 'option ' : ''}--${option}${equals ? ' ' : ''}`,
  })),
  { pattern: /(?<![-#] ?)\bkind (cooling|heating)\b/g, spelling: (_: string, kind: string) => `--kind ${kind}` },
];

/** An error's or a warning's text as a command-line user gives its inputs: parameters named by their options. */
export function commandLineSpelling(text: string): string {
  return SPELLINGS.reduce((spelt, { pattern, spelling }) => spelt.replace(pattern, spelling), text);
}
