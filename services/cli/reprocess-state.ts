import { readFile } from 'node:fs/promises';

/**
 * The state file of `heatpath reprocess` (OUT/reprocess-state.jsonl): one
 * JSON line per file processed, appended as each one ends, the last line of a
 * file winning. It is what makes the command resumable, and what tells a
 * file done before with these settings from one to analyse again.
 */
export interface FileOutcome {
  /** Path below the archive folder, with '/'. */
  file: string;
  sha256: string;
  /**
   * The job id of the file under the run's settings (archive-file-job-id.ts):
   * content, resolved parameters, power, calibration, algorithm version.
   * Absent in lines written before it was recorded.
   */
  key?: string;
  /** 'local', or the server's URL. Absent in lines written before it was recorded. */
  target?: string;
  /** ok: submitted or analysed; rejected: the file must be fixed; failed: try again. */
  status: 'ok' | 'rejected' | 'failed';
  /** The job id: the server's answer, or (local) the key; '' when not ok. */
  job_id: string;
  detail: string;
  /** The server's warnings on the upload, or the local results' (one per text); absent when none, and in lines written before they were recorded. */
  warnings?: string[];
}

/** The last outcome of every file in the state file; none when there is no state file yet. */
export async function readReprocessState(path: string): Promise<Map<string, FileOutcome>> {
  const outcomes = new Map<string, FileOutcome>();
  let text = '';
  try {
    text = await readFile(path, 'utf8');
  } catch {
    return outcomes;
  }
  // A line cut short by an interrupted run is ignored: that file runs again.
  for (const line of text.split('\n')) {
    try {
      const outcome = JSON.parse(line) as FileOutcome;
      outcomes.set(outcome.file, outcome);
    } catch {
      continue;
    }
  }
  return outcomes;
}

/**
 * Why a file must be analysed (or submitted) again although the state file
 * has an outcome for it: null when that outcome stands (done before with the
 * same content, settings and target), else the reason for the summary. A
 * failure is always tried again. A line written before the settings were
 * recorded stands only if its job id is this run's (a server's answer);
 * otherwise its settings are unknown and the file runs again.
 */
export function whyAgain(earlier: FileOutcome, now: { sha256: string; key: string; target: string }): string | null {
  if (earlier.status === 'failed') return 'retried';
  if (earlier.sha256 !== now.sha256) return 'content changed';
  if ((earlier.target ?? now.target) !== now.target) return earlier.target === 'local' ? 'done before locally' : `done before on ${earlier.target}`;
  const earlierKey = earlier.key ?? (earlier.job_id || undefined);
  if (earlierKey === undefined) return 'settings of the earlier run not recorded';
  return earlierKey === now.key ? null : 'settings changed';
}
