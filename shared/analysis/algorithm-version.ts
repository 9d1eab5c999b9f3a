/**
 * Versions recorded in every result's provenance. ALGORITHM_VERSION changes
 * whenever the same input and parameters may give a different result; job
 * ids include it, so a change makes the archive reprocessable.
 */
export const HEATPATH_VERSION = '0.1.0';
export const ALGORITHM_VERSION = 'analysis-11';
/**
 * Version of what the input parsers make of a file's bytes. The service keeps
 * each upload's parse under this name, so it changes only when a parser may
 * read the same bytes differently (and then ALGORITHM_VERSION changes too);
 * a new analysis method alone leaves the kept parses of the archive valid.
 */
export const PARSER_VERSION = 'parse-3';
