/**
 * The one catalogue of heatpath's errors. Codes are stable: clients, scripts
 * and the LIMS may branch on them. Every entry says what went wrong in its
 * title and what to do about it in its hint; a thrown error adds where.
 *
 * `status` is the HTTP status the service answers with; the CLI exits with 2
 * for every user error (status < 500).
 *
 * Add entries here, grouped by area; never reuse or renumber a code.
 */
export const errorCatalogue = {
  // ---- input files (parsers) ----
  INPUT_EMPTY: { status: 400, title: 'The input is empty', hint: 'Send a CSV or JSON transient with a time_s column and one value column.' },
  INPUT_MISSING_COLUMN: { status: 400, title: 'A required column is missing', hint: 'The header must name time_s and one of zth_K_per_W, temperature_C or voltage_V.' },
  INPUT_UNKNOWN_COLUMN: { status: 400, title: 'A column name is not recognised', hint: 'Value columns are zth_K_per_W, temperature_C or voltage_V, optionally followed by @channel (for example voltage_V@D1).' },
  INPUT_MIXED_QUANTITIES: { status: 400, title: 'Value columns measure different quantities', hint: 'Put columns of one quantity (all voltage_V, all temperature_C or all zth_K_per_W) in one file.' },
  INPUT_DUPLICATE_COLUMN: { status: 400, title: 'A column name appears twice', hint: 'Give each channel its own name, for example temperature_C@A and temperature_C@B.' },
  INPUT_ROW_LENGTH: { status: 400, title: 'A row has the wrong number of fields', hint: 'In CSV every data row needs one field per header column, separated like the header; in JSON every value array needs as many entries as time_s.' },
  INPUT_NOT_NUMERIC: { status: 400, title: 'A field is not a number', hint: 'Use plain decimal numbers (1e-6, 0.5), in JSON as numbers rather than strings; in CSV a decimal comma (0,5) is read only when the columns are separated by semicolons or tabs, or in a field in double quotes ("0,5").' },
  INPUT_NOT_FINITE: { status: 400, title: 'A field is NaN or infinite', hint: 'Remove or repeat-measure the sample; heatpath does not interpolate over missing values.' },
  INPUT_NEGATIVE_TIME: { status: 400, title: 'A time is negative', hint: 'Times are seconds since the power step, starting at or after zero: drop samples recorded before the trigger, or shift the times so that the power step is at t = 0.' },
  INPUT_DUPLICATE_TIME: { status: 400, title: 'A time appears twice', hint: 'Each time must be unique: remove a sample written twice; where close times were rounded to one value by a fixed-point export (%.6f), export the times with more significant digits (%.6e or %.9g).' },
  INPUT_TIME_NOT_INCREASING: { status: 400, title: 'Times are not strictly increasing', hint: 'Sort the rows by time_s; the bench file may have been concatenated.' },
  INPUT_TOO_FEW_POINTS: { status: 422, title: 'Too few samples to analyse', hint: 'Send at least 20 samples spanning at least 2 decades of time; a spectrum needs several decades.' },
  INPUT_BAD_JSON: { status: 400, title: 'The JSON is malformed or not of the transient layout', hint: 'Send {"time_s": [...], "temperature_C": [...]} or a channel map such as {"time_s": [...], "voltage_V": {"D1": [...]}}.' },
  INPUT_BAD_FORMAT: { status: 415, title: 'The input format is not supported', hint: 'Send CSV (comma, semicolon or tab separated) or JSON.' },
  CYCLE_COUNT_INVALID: { status: 400, title: 'A cycle count is not a whole number of cycles written in digits', hint: 'Write the number of cycles as digits only, e.g. 40000: no thousands separator (40,000 or 40.000), decimal point, exponent (4e4), sign or words.' },
  INPUT_AMBIGUOUS_NUMBER: { status: 400, title: 'A number could be read two ways', hint: 'Write single values (header lines, meta values, options) without thousands separators, 1250 or 1.25 rather than 1,250; a decimal point is never ambiguous.' },
  INPUT_DUPLICATE_METADATA: { status: 400, title: 'A metadata key is given twice', hint: 'Keep one `# key: value` line per key that heatpath reads (power, kind, cycle count), with the value that is meant, and one key of each name in a JSON "meta" object.' },
  INPUT_HEADER_REPEATED: { status: 400, title: 'The header line repeats among the data rows', hint: 'Keep one record per file: split the file where the header repeats, and send each record on its own.' },

  // ---- calibration ----
  CALIBRATION_TOO_FEW_POINTS: { status: 422, title: 'Too few calibration points for the model', hint: 'linear needs at least 2 points (the two-point K-factor), poly2, poly3 and poly4 at least 4, 5 and 6, exp at least 4, at as many distinct voltages as the model has coefficients; add points or choose a lower order.' },
  CALIBRATION_BAD_MODEL: { status: 400, title: 'Unknown calibration model', hint: 'Choose one of linear, poly2, poly3, poly4, exp.' },
  CALIBRATION_NOT_MONOTONIC: { status: 422, title: 'The calibration curve is not monotonic over its range', hint: "A TSP's voltage must fall (or rise) steadily with temperature: check the points (a swapped row, a step taken before the device settled?) or choose a lower-order model." },
  CALIBRATION_OUT_OF_RANGE: { status: 422, title: 'A measured voltage lies outside the calibrated range', hint: 'Extend the calibration sweep to cover the measured temperatures.' },
  CALIBRATION_BAD_FILE: { status: 400, title: 'The calibration file is not valid', hint: 'Create it with `heatpath calibrate POINTS.csv --out CAL.json`.' },
  CALIBRATION_POINTS_COLUMNS: { status: 400, title: 'The calibration points need exactly the columns temperature_C and voltage_V', hint: 'Write the header temperature_C,voltage_V (either order) and one row per calibration point.' },
  CALIBRATION_REQUIRED: { status: 422, title: 'Voltage input needs a calibration', hint: 'Give a calibration to convert voltage_V to temperature: --calibration CAL.json on the command line; calibration_id (a stored one) or an inline calibration in the multipart meta field for an upload. A channel may have its own: --calibration T2=CAL.json, calibration_id@T2, or calibration@T2 in meta.' },
  CALIBRATION_CHANNEL_NOT_FOUND: { status: 400, title: "A channel's own calibration names a channel the file does not have", hint: 'Name a channel of the file\'s value columns (voltage_V@T2 is channel T2; a column without @ is channel 1), as the detail lists them.' },

  // ---- analysis parameters and physics ----
  PARAM_INVALID: { status: 400, title: 'An analysis parameter is invalid', hint: 'The allowed values: `heatpath analyze --help` on the command line, /docs for the service.' },
  POWER_REQUIRED: { status: 422, title: 'The heating power is missing', hint: 'Give the heating power: --power-w, or --current-a with --voltage-v, on the command line; power_W, or current_A with voltage_V, for an upload; or a `# power_W:` line in the file. zth_K_per_W input needs none.' },
  ANALYSIS_NOT_ANALYSABLE: { status: 422, title: 'The transient cannot be analysed', hint: 'Check that the curve is a cooling or heating transient of the stated kind and spans several decades of time.' },

  // ---- comparing two measurements (dual-interface Rth-JC, degradation) ----
  COMPARISON_NO_OVERLAP: { status: 422, title: 'The two measurements share no common range to compare', hint: 'Measure both curves the same way (same time window and sampling) on the same device, so that their Zth times and C_sum ranges overlap.' },
  RTHJC_NOT_ONE_DEVICE: { status: 422, title: 'The two measurements are not one device under two interfaces, so no Rth-JC is given', hint: 'The transient dual interface method (JESD51-14) needs two cooling transients of the same device, at one heating power, with one calibration and early-time correction, that differ only in the interface between case and cold plate: check the power and calibration of each file, and that both files are of the same device.' },
  COMPARISON_SEVERAL_CHANNELS: { status: 422, title: 'A file to compare holds more than one channel', hint: 'Give one single-channel file per measurement: split the channels into files of their own.' },
  DEGRADATION_BATCH_CANCELLED: { status: 409, title: "The batch was cancelled before it analysed all of the sample's uploads", hint: 'Its trend would stay incomplete: start a new batch for the sample (POST /v1/batches with its sample_id) and ask with its batch_id, or ask without ?batch_id= for the uploads\' own jobs.' },
  DEGRADATION_CHANNEL_NOT_FOUND: { status: 400, title: "The sample's results have no such channel", hint: 'Choose one of the channels the detail lists with ?channel=, or leave it out when the results have one channel.' },

  // ---- RC networks, thermal models and their numerics ----
  RC_NETWORK_INVALID: { status: 422, title: 'An RC network is not valid', hint: 'Give arrays of equal length with at least one stage, every R (K/W), C (J/K) and tau (s) finite and positive.' },
  THERMAL_STACK_INVALID: { status: 400, title: 'A layered stack description is not valid', hint: 'Give at least one layer, each with positive thickness_m, conductivity_W_per_mK, volumetric_heat_capacity_J_per_m3K, area_start_m2 and area_end_m2; the sink resistance must be finite and not negative.' },
  NUMERICS_INVALID_INPUT: { status: 500, title: 'A numerical routine was called with invalid arrays', hint: 'This is a heatpath defect: report the input file and the analysis parameters to the maintainers.' },
  NUMERICS_NOT_CONVERGED: { status: 500, title: 'A numerical routine did not converge', hint: 'This is a heatpath defect: report the input file and the analysis parameters to the maintainers.' },

  // ---- CLI usage ----
  CLI_USAGE: { status: 400, title: 'The command line is not valid', hint: 'Run `heatpath --help` for the commands and `heatpath COMMAND --help` for the options of one.' },
  FILE_NOT_READABLE: { status: 400, title: 'A file cannot be read', hint: 'Check the path and its permissions.' },
  FILE_NOT_WRITABLE: { status: 400, title: 'An output file or folder cannot be written', hint: 'Choose an output path (--out) inside a folder you may write to, on a disk with room; for standard output, a destination that takes it.' },

  // ---- service: configuration ----
  CONFIG_INVALID: { status: 500, title: 'The service configuration is not valid', hint: 'Fix the environment variables listed above and start again; README.md lists them with their defaults.' },

  // ---- service: HTTP requests ----
  REQUEST_INVALID: { status: 400, title: 'The request does not match the API', hint: 'See /docs or /openapi.json for the parameters and bodies each route accepts.' },
  AUTH_KEY_MISSING: { status: 401, title: 'No API key was sent', hint: 'Send the header Authorization: Bearer <token> with a key the lab admin gave you.' },
  AUTH_KEY_INVALID: { status: 401, title: 'The API key is not known', hint: 'Check the token for typos, or ask the lab admin for a valid key.' },
  AUTH_ROLE_FORBIDDEN: { status: 403, title: 'The API key may not do this', hint: 'Use a key whose role allows it: bench uploads and reads, reader reads, admin does everything.' },
  ROUTE_NOT_FOUND: { status: 404, title: 'No such route', hint: 'See /docs for the routes; they live under /v1.' },
  RESOURCE_NOT_FOUND: { status: 404, title: 'No such resource', hint: 'Check the id; ids come from the answers of earlier requests (upload, calibration, batch, webhook).' },
  RESULT_NOT_READY: { status: 409, title: 'The job has no result yet', hint: 'Poll the job (its links.self) until its state is completed, or register a webhook.' },
  JOB_WITHDRAWN: { status: 409, title: 'Every upload of the job was withdrawn before it ran', hint: 'It will not run: if the measurement is to count after all, upload the file again under its sample (GET /v1/transients/{upload_id} shows the withdrawal and its reason).' },
  JOB_CANCELLED: { status: 409, title: 'The job was cancelled with its batch', hint: 'It will not run: start a new batch (POST /v1/batches) to reprocess its upload.' },
  JOB_FAILED: { status: 422, title: 'The analysis job failed', hint: 'See the job\'s error (GET /v1/jobs/{job_id}); fix the input or parameters and upload again.' },
  JOB_NOT_RETRYABLE: { status: 409, title: 'The job cannot be retried', hint: 'Only a job that failed for a reason outside its input (the store, Redis, a crash) can be retried; a job whose input or parameters were at fault fails the same way again: fix them and upload again, or start a batch with other parameters.' },
  IDEMPOTENCY_KEY_REUSED: { status: 409, title: 'The Idempotency-Key was used for a different request', hint: 'Use a fresh Idempotency-Key for every distinct upload; repeat a key only to retry the same upload.' },
  UPLOAD_TOO_LARGE: { status: 413, title: 'The upload is too large', hint: 'Send fewer samples (100 to 200 per decade of log-spaced time carry what the analysis needs), or ask the admin to raise HEATPATH_MAX_UPLOAD_BYTES.' },
  MEDIA_TYPE_UNSUPPORTED: { status: 415, title: 'The Content-Type is not supported', hint: 'Uploads (POST /v1/transients) take text/csv, application/json or multipart/form-data (a file part plus metadata fields); every other route takes application/json.' },
  RATE_LIMITED: { status: 429, title: 'Too many requests for this API key', hint: 'Wait for the Retry-After seconds, then retry; the admin sets HEATPATH_RATE_LIMIT_PER_MINUTE.' },
  SERVICE_UNAVAILABLE: { status: 503, title: 'A backing service is unavailable', hint: 'Retry later; the admin should check Redis and the data directory (see /health/ready).' },
  INTERNAL_ERROR: { status: 500, title: 'Internal error', hint: 'Retry; if it persists, send the request id to the service admin.' },

  // ---- service: queue, batches, webhooks ----
  WEBHOOK_ALREADY_REGISTERED: { status: 409, title: 'The URL is registered already', hint: 'Keep the webhook that is registered (GET /v1/webhooks), or remove it (DELETE /v1/webhooks/{id}) and register the URL again with other events.' },
  WEBHOOK_URL_NOT_ALLOWED: { status: 422, title: 'The webhook URL is not on the allowlist', hint: 'Ask the admin to add its origin (scheme://host:port) to HEATPATH_WEBHOOK_ALLOWLIST, or use an allowed URL.' },
  UPLOAD_ALREADY_WITHDRAWN: { status: 409, title: 'The upload was withdrawn already', hint: 'Its first withdrawal stands, as the detail gives it (GET /v1/transients/{upload_id} shows it too): a withdrawal is kept for the record and is not changed.' },
  BATCH_ALREADY_FINISHED: { status: 409, title: 'The batch has finished: every job has an outcome', hint: 'There is nothing left to cancel, and its results stand (GET /v1/batches/{batch_id} counts them). To analyse the uploads otherwise, start a new batch (POST /v1/batches).' },
  BATCH_SELECTION_EMPTY: { status: 422, title: 'The batch selects no stored transients', hint: 'Widen the selection (sample, bench, tag, time range) or leave it empty to select all.' },
  DEGRADATION_REFERENCE_WITHDRAWN: { status: 422, title: 'The reference asked for is a withdrawn upload', hint: 'A withdrawn upload is not a measurement of the trend: choose another ?reference_upload_id= (GET /v1/samples/{sample_id}/results lists the uploads and which are withdrawn), or leave it out for the first measurement.' },
  DEGRADATION_TOO_FEW_RESULTS: { status: 422, title: 'Too few completed analyses to show a trend', hint: 'A degradation trend needs a reference and at least one later completed analysis of the same channel: wait for pending jobs (GET /v1/samples/{sample_id}/results), or choose another ?channel= or ?batch_id=.' },
  SUBMIT_REJECTED: { status: 400, title: 'The server refused the transient', hint: 'Fix what the server reported, as its code and detail say, and submit the file again.' },
  CALIBRATION_REJECTED: { status: 400, title: 'The server refused the calibration', hint: 'Fix what the server reported, as its code and detail say (or fit the calibration again with heatpath calibrate), and run the command again.' },
  SERVER_REFUSED_REQUEST: { status: 404, title: 'The server refused the request', hint: 'Check the ids the command names (--calibration-id, or the calibration stored with --calibration) and --server (the service\'s base URL), then run the same command again.' },
  SERVER_ACCESS_DENIED: { status: 401, title: 'The server refused the API key', hint: 'Check --key (a typo, a key the admin revoked?) and that its role may upload (bench or admin), then run the same command again.' },
  SERVER_UNREACHABLE: { status: 503, title: 'The heatpath server did not accept the upload', hint: 'Check --server and the network, then run the same command again: repeated submissions are safe.' },
  STORED_INPUT_MISSING: { status: 410, title: 'The stored raw transient of the job is gone from the store', hint: 'Upload the transient again (the record of the upload is kept, and the same file runs the same job again), or restore it from a backup; a job that failed for want of it then runs again with POST /v1/jobs/{job_id}/retry.' },
} as const satisfies Record<string, { status: number; title: string; hint: string }>;

export type ErrorCode = keyof typeof errorCatalogue;
