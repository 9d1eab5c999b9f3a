import { readFile } from 'node:fs/promises';

/**
 * The state file of `heatpath reprocess` (OUT/reprocess-state.jsonl): one
 * JSON line per file processed, appended as each one ends, the last line of a
 * file winning. It is what makes the command resumable, and what tells a
 * file done before with these settings from one to analyse again. Only a
 * file's own outcome is recorded: a run stopped by the server (unreachable,
 * the key refused) records nothing for the files it could not send.
 */
export interface FileOutcome {
  /** Path below the archive folder, with '/'. */
  file: string;
  /** The archive folder (absolute, links resolved) the file is in: an OUT holds the state of one archive. Absent in lines written before it was recorded. */
  archive?: string;
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
  /** Rth, the server's job state, or the error. */
  detail: string;
  /** Why the run that wrote the line did the file again although an earlier line had it ('settings changed'); absent when it was new. */
  redone?: string;
  /** When the outcome was made (ISO 8601). */
  done_at?: string;
  /** The server's warnings on the upload, or the local results' (one per text); absent when none, and in lines written before they were recorded. */
  warnings?: string[];
  /** Local: the result folders written, relative to OUT with '/', one per channel. */
  results?: string[];
  /** Local: the algorithm version of the results. */
  algorithm?: string;
  /** The time-constant spectrum method, as resolved for the file (sent to the server, or used here). */
  method?: string;
  /** Local: Rth total of each channel, by channel name. */
  rth_total_K_per_W?: Record<string, number>;
  /** Server: the job's state in the server's answer (queued, stored, completed, ...). */
  job_state?: string;
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
 * same content, settings and target, and with --local its results still on
 * disk: `resultsPresent`), else the reason for the summary. A failure is
 * always tried again. A line written before the settings were recorded stands
 * only if its job id is this run's (a server's answer); otherwise its
 * settings are unknown and the file runs again.
 */
export function whyAgain(earlier: FileOutcome, now: { sha256: string; key: string; target: string }, resultsPresent: (earlier: FileOutcome) => boolean): string | null {
  if (earlier.status === 'failed') return 'retried';
  if (earlier.sha256 !== now.sha256) return 'content changed';
  if ((earlier.target ?? now.target) !== now.target) return earlier.target === 'local' ? 'done before locally' : `done before on ${earlier.target}`;
  const earlierKey = earlier.key ?? (earlier.job_id || undefined);
  if (earlierKey === undefined) return 'settings of the earlier run not recorded';
  if (earlierKey !== now.key) return 'settings changed';
  return earlier.status === 'ok' && now.target === 'local' && !resultsPresent(earlier) ? 'its results are missing' : null;
}

/** The detail of an outcome written before `redone` was recorded apart: "redone: settings changed; Rth ..." gives "Rth ...". */
export function ownDetail(outcome: FileOutcome): string {
  return outcome.redone === undefined ? outcome.detail.replace(/^redone: [^;]*; /, '') : outcome.detail;
}
