/**
 * The warnings of a run over many files, for the terminal: the first of each kind is shown in full with its file,
 * later ones of that kind are counted and summed up once at the end. An archive of thousands of files sent again
 * gets one "the same bytes were uploaded for this sample before" per file; a line each would bury the one
 * warning that differs. Warnings that differ only in numbers and ids (upl-..., a time of arrival, a temperature
 * range) are one kind. Every file's own warnings stay in full in the run's summary file.
 */
export class WarningTally {
  private readonly kinds = new Map<string, { first: string; file: string; files: number }>();

  /** A file's warnings; returns the lines to show now: those of a kind not seen before. */
  record(file: string, warnings: readonly string[]): string[] {
    const shown: string[] = [];
    for (const warning of new Set(warnings)) {
      const kind = kindOf(warning);
      const seen = this.kinds.get(kind);
      if (seen) seen.files++;
      else {
        this.kinds.set(kind, { first: warning, file, files: 1 });
        shown.push(`${file}: warning: ${warning}`);
      }
    }
    return shown;
  }

  /** One line per kind of warning that came up for more than one file, with how many and the first file. */
  summary(): string[] {
    return [...this.kinds.values()]
      .filter(({ files }) => files > 1)
      .map(({ first, file, files }) => `warning on ${files} files (shown for ${file} only; each file's own in the summary's warnings column): ${first}`);
  }
}

function kindOf(warning: string): string {
  return warning
    .replace(/\b(?:upl|job|bat)-[0-9A-Za-z-]+/g, 'ID')
    .replace(/\d{4}-\d\d-\d\dT[\d:.]+Z/g, 'TIME')
    .replace(/[-+]?\d+(?:\.\d+)?(?:e[-+]?\d+)?/gi, 'N');
}
