import { Counter, Histogram, type Registry } from 'prom-client';
import type { AnalysisWorker } from './analysis-worker.js';
import { isFinalAttempt } from './final-attempt.js';
import type { WebhookDeliveryWorker } from './webhook-delivery.js';

/**
 * Prometheus metrics of the analysis jobs this process runs: duration of
 * completed jobs and finished attempts by outcome. Counted from the worker's
 * own events (QueueEvents are best-effort). Register them on the registry the
 * process exposes (the API's /metrics when API and workers share a process).
 */
export function observeAnalysisWorker(worker: AnalysisWorker, registry: Registry): void {
  const duration = new Histogram({
    name: 'heatpath_job_duration_seconds',
    help: 'Time from a worker taking an analysis job to its completion.',
    buckets: [0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30, 60],
    registers: [registry],
  });
  const attempts = new Counter({
    name: 'heatpath_job_attempts_total',
    help: 'Finished analysis attempts by outcome: completed, retried (failed, will run again) or failed (for good).',
    labelNames: ['outcome'] as const,
    registers: [registry],
  });
  worker.worker.on('completed', (job) => {
    attempts.inc({ outcome: 'completed' });
    if (job.processedOn && job.finishedOn) duration.observe((job.finishedOn - job.processedOn) / 1000);
  });
  worker.worker.on('failed', (job, error) => {
    attempts.inc({ outcome: !job || isFinalAttempt(job, error) ? 'failed' : 'retried' });
  });
}

/**
 * Webhook deliveries this process finished, by outcome: delivered (2xx),
 * dropped (the registration was removed), retried (an attempt failed, another
 * follows) or given_up (the last attempt failed, or the URL left the allowlist).
 */
export function observeWebhookDeliveries(deliveries: WebhookDeliveryWorker, registry: Registry): void {
  const outcomes = new Counter({
    name: 'heatpath_webhook_deliveries_total',
    help: 'Finished webhook delivery attempts by outcome: delivered, dropped (registration removed), retried or given_up.',
    labelNames: ['outcome'] as const,
    registers: [registry],
  });
  deliveries.worker.on('completed', (_job, outcome) => outcomes.inc({ outcome: 'dropped' in outcome ? 'dropped' : 'delivered' }));
  deliveries.worker.on('failed', (job, error) => outcomes.inc({ outcome: !job || isFinalAttempt(job, error) ? 'given_up' : 'retried' }));
}
