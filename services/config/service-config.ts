import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { Type, type Static } from 'typebox';
import { Value } from 'typebox/value';
import { HeatpathError } from '../../shared/errors/heatpath-error.js';
import { plainValidationIssues } from '../../shared/schemas/plain-validation-issues.js';
import { QUEUE_PREFIX_PATTERN, REDIS_URL_PATTERN } from '../../shared/schemas/worded-patterns.js';
import { withPasswordHidden } from './password-hidden.js';
import { typedFieldsFromText } from '../../shared/schemas/typed-fields-from-text.js';
import { closestName } from '../../shared/input/closest-name.js';
import { SETTINGS_VARIABLE } from '../../workers/processor-settings.js';
import { parseApiKeyList, type ApiKey } from './api-key-list.js';

/**
 * The service's environment: the one place where its variables, their
 * defaults and their meaning are written down. Read once at start by
 * `loadServiceConfig`; nothing else reads process.env.
 */
const ServiceEnvSchema = Type.Object({
  PORT: Type.Integer({ minimum: 0, maximum: 65535, default: 8080, description: 'TCP port of the HTTP API (0 picks a free one).' }),
  HOST: Type.String({ minLength: 1, default: '127.0.0.1', description: 'Address the API listens on; 0.0.0.0 serves the whole lab network.' }),
  REDIS_URL: Type.String({ pattern: REDIS_URL_PATTERN.pattern, default: 'redis://127.0.0.1:6379', description: 'Redis holding the job queue (redis:// or rediss://).' }),
  HEATPATH_DATA_DIR: Type.String({ minLength: 1, default: '.heatpath-data', description: 'Durable store of raw transients, uploads and results (relative to the working directory).' }),
  HEATPATH_API_KEYS: Type.Optional(Type.String({ description: 'API keys as name:role:token, comma-separated; role is bench, reader or admin; no comments (a # is part of a token).' })),
  HEATPATH_API_KEYS_FILE: Type.Optional(Type.String({ minLength: 1, description: 'File with one name:role:token a line (whole-line # comments); instead of HEATPATH_API_KEYS.' })),
  HEATPATH_MAX_UPLOAD_BYTES: Type.Integer({ minimum: 1024, default: 32 * 1024 * 1024, description: 'Largest accepted upload body or file in bytes; larger ones get 413.' }),
  HEATPATH_RATE_LIMIT_PER_MINUTE: Type.Integer({ minimum: 1, default: 1200, description: 'Requests per API key per minute; more get 429.' }),
  HEATPATH_REDIS_ANSWER_MS: Type.Integer({ minimum: 50, default: 2000, description: 'How long an API request waits for Redis; then uploads are answered as stored (queued later) and reads get 503.' }),
  HEATPATH_QUEUE_PREFIX: Type.String({ minLength: 1, pattern: QUEUE_PREFIX_PATTERN.pattern, default: '{heatpath}', description: 'BullMQ key prefix; keep the {hash tag} for Redis Cluster. API and workers must agree.' }),
  HEATPATH_WORKER_PROCESSES: Type.Optional(Type.Integer({ minimum: 1, maximum: 256, description: 'Analysis processes per worker instance; default: one per CPU core plus one.' })),
  HEATPATH_WORKER_METRICS_PORT: Type.Optional(Type.Integer({ minimum: 0, maximum: 65535, description: 'Port on HOST where a worker process started alone (npm run start:worker) serves its job metrics at /metrics for Prometheus, without a key; unset: none (npm start serves them on the API\'s /metrics).' })),
  HEATPATH_LOCK_DURATION_MS: Type.Integer({ minimum: 1000, default: 30_000, description: 'Job lock duration, renewed every half of it while the job runs; a dead worker\'s job is taken over once its lock has expired (see HEATPATH_STALLED_INTERVAL_MS).' }),
  HEATPATH_STALLED_INTERVAL_MS: Type.Integer({
    minimum: 1000,
    default: 10_000,
    description:
      'How often workers look for jobs whose worker died. BullMQ marks an active job on one look and takes it over on a later one once its lock has expired, ' +
      'so a dead worker\'s job runs again within the lock duration plus two of these intervals. A short interval takes no live job: one whose lock is renewed is never taken over.',
  }),
  HEATPATH_RECOVERY_INTERVAL_MS: Type.Integer({ minimum: 1000, default: 60_000, description: 'How often stored uploads without a result are offered to the queue again (after a Redis loss).' }),
  HEATPATH_SHUTDOWN_TIMEOUT_MS: Type.Integer({ minimum: 0, default: 30_000, description: 'On SIGTERM, how long running jobs may finish before the worker stops anyway (their jobs are retried elsewhere).' }),
  HEATPATH_WEBHOOK_ALLOWLIST: Type.String({ default: '', description: 'Origins (scheme://host:port), comma-separated, that webhooks may be registered for and delivered to; empty allows none.' }),
  HEATPATH_LOG_LEVEL: Type.Union(
    ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'].map((level) => Type.Literal(level)),
    { default: 'info', description: 'pino log level.' },
  ),
});
type ServiceEnv = Static<typeof ServiceEnvSchema>;

/** The schema's defaults, for code run without a loaded configuration (tests, tools); variables without one are left out. */
export const serviceEnvDefaults = Value.Create(ServiceEnvSchema);

export interface ServiceConfig {
  port: number;
  host: string;
  redisUrl: string;
  /** Absolute path. */
  dataDir: string;
  apiKeys: ApiKey[];
  maxUploadBytes: number;
  rateLimitPerMinute: number;
  redisAnswerMs: number;
  logLevel: string;
  queue: QueueConfig;
}

/** Queue and worker settings, shared by the API (producer) and the workers. */
export interface QueueConfig {
  prefix: string;
  /** Null: one per CPU core plus one (workers/main.ts). */
  workerProcesses: number | null;
  /** Null: a worker started alone serves no metrics. */
  workerMetricsPort: number | null;
  lockDurationMs: number;
  stalledIntervalMs: number;
  recoveryIntervalMs: number;
  shutdownTimeoutMs: number;
  webhookAllowlist: string[];
}

export interface ServiceConfigOptions {
  /** Whether this process serves HTTP and so needs API keys (default true; workers alone need none). */
  servesApi?: boolean;
}

/**
 * Validate the environment once. Throws one CONFIG_INVALID error that lists
 * every bad variable with what to set instead, so an operator fixes all in
 * one go.
 */
export function loadServiceConfig(env: NodeJS.ProcessEnv = process.env, { servesApi = true }: ServiceConfigOptions = {}): ServiceConfig {
  const known = Object.keys(ServiceEnvSchema.properties);
  const given = Object.fromEntries(known.filter((name) => env[name] !== undefined && env[name] !== '').map((name) => [name, env[name]]));
  // Numbers are read strictly (PORT=80.5 or HEATPATH_RATE_LIMIT_PER_MINUTE=1.5 is an error, not 80 or 1).
  const converted = Value.Default(ServiceEnvSchema, typedFieldsFromText(ServiceEnvSchema, given));
  const problems = plainValidationIssues(Value.Errors(ServiceEnvSchema, converted), '').map((issue) => describeEnvProblem(issue.field, issue.message, given));
  // Checked whatever else is wrong, so that one start lists every problem.
  const keys = servesApi ? loadApiKeys(given.HEATPATH_API_KEYS as string | undefined, given.HEATPATH_API_KEYS_FILE as string | undefined, problems) : [];
  for (const entry of String(given.HEATPATH_WEBHOOK_ALLOWLIST ?? '').split(',').map((item) => item.trim()).filter(Boolean)) {
    const problem = allowlistEntryProblem(entry);
    // Named with its password hidden: the error goes to stderr and the service's log.
    if (problem) problems.push(`HEATPATH_WEBHOOK_ALLOWLIST entry ${JSON.stringify(withPasswordHidden(entry))} ${problem}`);
  }
  if (problems.length > 0) {
    // One line per problem, then HeatpathError's hint on a line of its own.
    const lines = problems.map((problem) => `\n  - ${problem.replace(/\.$/, '')}`);
    throw new HeatpathError('CONFIG_INVALID', `${problems.length} problem${problems.length > 1 ? 's' : ''}:${lines.join('')}\n`);
  }
  const valid = converted as ServiceEnv;
  return {
    port: valid.PORT,
    host: valid.HOST,
    redisUrl: valid.REDIS_URL,
    dataDir: resolve(valid.HEATPATH_DATA_DIR),
    apiKeys: keys,
    maxUploadBytes: valid.HEATPATH_MAX_UPLOAD_BYTES,
    rateLimitPerMinute: valid.HEATPATH_RATE_LIMIT_PER_MINUTE,
    redisAnswerMs: valid.HEATPATH_REDIS_ANSWER_MS,
    logLevel: valid.HEATPATH_LOG_LEVEL,
    queue: {
      prefix: valid.HEATPATH_QUEUE_PREFIX,
      workerProcesses: valid.HEATPATH_WORKER_PROCESSES ?? null,
      workerMetricsPort: valid.HEATPATH_WORKER_METRICS_PORT ?? null,
      lockDurationMs: valid.HEATPATH_LOCK_DURATION_MS,
      stalledIntervalMs: valid.HEATPATH_STALLED_INTERVAL_MS,
      recoveryIntervalMs: valid.HEATPATH_RECOVERY_INTERVAL_MS,
      shutdownTimeoutMs: valid.HEATPATH_SHUTDOWN_TIMEOUT_MS,
      webhookAllowlist: valid.HEATPATH_WEBHOOK_ALLOWLIST.split(',').map((entry) => entry.trim()).filter(Boolean),
    },
  };
}

/**
 * One warning per HEATPATH_* variable that is none of the service's (a typo
 * such as HEATPATH_API_KEY is otherwise ignored without a word), naming the
 * variable it most likely meant. Not an error: a variable of a newer or older
 * version, left in a deployment, must not stop a start.
 */
export function unknownVariableWarnings(env: NodeJS.ProcessEnv = process.env): string[] {
  const known = Object.keys(ServiceEnvSchema.properties);
  return Object.keys(env)
    .filter((name) => name.startsWith('HEATPATH_') && !known.includes(name) && name !== SETTINGS_VARIABLE)
    .map((name) => {
      const meant = closestName(name, known);
      return `${name} is not a variable of the service and is ignored${meant ? `: did you mean ${meant}?` : ''} (README.md, Configuration, lists them)`;
    });
}

function describeEnvProblem(instancePath: string, message: string, given: Record<string, unknown>): string {
  const name = instancePath.replace(/^\//, '');
  const description = (ServiceEnvSchema.properties as Record<string, { description?: string }>)[name]?.description ?? '';
  const value = typeof given[name] === 'string' && !/KEY|TOKEN/.test(name) ? ` (it is ${JSON.stringify(given[name])})` : '';
  return `${name} ${message}${value}${description ? `: ${description}` : ''}`;
}

function loadApiKeys(keyList: string | undefined, keysFile: string | undefined, problems: string[]): ApiKey[] {
  if (keyList !== undefined && keysFile !== undefined) {
    problems.push('HEATPATH_API_KEYS and HEATPATH_API_KEYS_FILE are both set: set only one.');
    return [];
  }
  if (keysFile !== undefined) {
    let text: string;
    try {
      text = readFileSync(keysFile, 'utf8');
    } catch (error) {
      problems.push(`HEATPATH_API_KEYS_FILE: cannot read ${keysFile} (${(error as Error).message}).`);
      return [];
    }
    return collect(parseApiKeyList(text, 'HEATPATH_API_KEYS_FILE', 'file'), problems);
  }
  if (keyList !== undefined) return collect(parseApiKeyList(keyList, 'HEATPATH_API_KEYS', 'variable'), problems);
  problems.push('No API keys: set HEATPATH_API_KEYS=name:role:token[,...] or HEATPATH_API_KEYS_FILE (roles: bench, reader, admin; tokens of 16 or more characters, e.g. from `openssl rand -hex 24`).');
  return [];
}

function collect(parsed: { keys: ApiKey[]; problems: string[] }, problems: string[]): ApiKey[] {
  problems.push(...parsed.problems);
  return parsed.keys;
}

/**
 * Why an allowlist entry is not an origin, or null. Only origins are matched
 * (workers/webhook-registry.ts): an entry with a path would allow every path
 * of its origin, so it is refused rather than read as narrower than it is.
 */
function allowlistEntryProblem(entry: string): string | null {
  const example = 'write scheme://host:port, for example http://lims.lab.local:8080';
  if (!/^https?:\/\/[^/]+/i.test(entry) || !URL.canParse(entry)) return `is not an origin: ${example}`;
  const url = new URL(entry);
  if (url.username !== '' || url.password !== '') return `holds a user name or password: ${example}`;
  if (url.pathname !== '/' || url.search !== '' || url.hash !== '') {
    return `has a path, query or fragment, but only origins are matched (a webhook may use any path of an allowed origin): write only scheme://host:port, here ${url.origin}`;
  }
  return null;
}
