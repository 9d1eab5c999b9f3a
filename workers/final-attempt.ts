import type { Job } from 'bullmq';

/** Whether a failed attempt was the job's last: BullMQ runs it again unless the error was unrecoverable or the attempts are used up. */
export function isFinalAttempt(job: Job, error: Error): boolean {
  return error.name === 'UnrecoverableError' || job.attemptsMade >= (job.opts.attempts ?? 1);
}
