import type { AnalysisQueue } from '../../../workers/analysis-queue.js';

/**
 * The queue as the API uses it: every call that returns a promise rejects
 * after `timeoutMs`. While Redis is away the queue waits for a connection
 * instead of failing, and an HTTP request must not wait with it (uploads are
 * then answered as stored, reads get 503). A late call still completes in the
 * background, which is harmless: job ids are deterministic.
 */
export function withQueueDeadline(queue: AnalysisQueue, timeoutMs: number): AnalysisQueue {
  return new Proxy(queue, {
    get(target, property, receiver) {
      const member = Reflect.get(target, property, receiver);
      if (typeof member !== 'function' || property === 'close') return member;
      return (...args: unknown[]) => {
        const answer: unknown = member.apply(target, args);
        return answer instanceof Promise ? raceDeadline(answer, timeoutMs) : answer;
      };
    },
  });
}

function raceDeadline<T>(answer: Promise<T>, timeoutMs: number): Promise<T> {
  let timer: NodeJS.Timeout | undefined;
  const deadline = new Promise<never>((_, reject) => {
    timer = setTimeout(() => reject(new Error(`Redis did not answer within ${timeoutMs} ms`)), timeoutMs);
  });
  // The abandoned call may still reject later: nobody waits for it any more.
  answer.catch(() => undefined);
  return Promise.race([answer, deadline]).finally(() => clearTimeout(timer));
}
