/**
 * The kept parse of an upload (services/store/parsed-transient-codec.ts) must
 * give the analysis exactly what parseTransient gives: the same doubles bit
 * for bit (IEEE 754 binary64 round trip through raw bytes), the same
 * channels, quantity and metadata. Anything it cannot vouch for decodes to
 * null, so that the caller parses the raw bytes again.
 */
import { mkdtemp, readdir, rm, writeFile } from 'node:fs/promises';
import { readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { parseTransient } from '../shared/input/parse-transient.js';
import { PARSER_VERSION } from '../shared/analysis/algorithm-version.js';
import { decodeParsedTransient, encodeParsedTransient } from '../services/store/parsed-transient-codec.js';
import { sha256Hex } from '../shared/input/sha256-hex.js';
import { TransientStore } from '../services/store/transient-store.js';

const fixture = (name: string) => readFileSync(new URL(`./fixtures/demo-lab/${name}`, import.meta.url));

/** The encoded parse with its JSON header changed by `change`, the doubles moved to the new aligned start. */
function withHeader(encoded: Uint8Array, change: (header: Record<string, unknown>) => Record<string, unknown>): Uint8Array {
  const aligned = (length: number) => Math.ceil(length / 8) * 8;
  const headerLength = new DataView(encoded.buffer, encoded.byteOffset).getUint32(0, true);
  const header = Buffer.from(JSON.stringify(change(JSON.parse(Buffer.from(encoded.subarray(4, 4 + headerLength)).toString('utf8')))));
  const data = encoded.subarray(aligned(4 + headerLength));
  const out = new Uint8Array(aligned(4 + header.length) + data.length);
  new DataView(out.buffer).setUint32(0, header.length, true);
  out.set(header, 4);
  out.set(data, aligned(4 + header.length));
  return out;
}

describe('parsed transient codec', () => {
  it('round-trips every double, channel, quantity and metadata line of the demo files (CSV with two channels, JSON)', () => {
    for (const name of ['fh-tt1_m21-m22_cooling.csv', 'fh-tt2_q15_heating.json', 'fh-tt1_m07_cooling.csv']) {
      const parsed = parseTransient(fixture(name), name);
      const decoded = decodeParsedTransient(encodeParsedTransient(parsed));
      expect(decoded).toEqual(parsed);
    }
  });

  it('keeps values that decimal text would round: -0, subnormals and 17-digit doubles', () => {
    const time_s = Float64Array.from([5e-324, 1e-6, 0.1 + 0.2]);
    const file = { quantity: 'zth_K_per_W' as const, time_s, channels: [{ name: '1', values: Float64Array.from([-0, Number.MIN_VALUE, 1 / 3]) }], meta: { kind: 'cooling' }, meta_lines: { kind: 1 } };
    const decoded = decodeParsedTransient(encodeParsedTransient(file))!;
    expect(Object.is(decoded.channels[0].values[0], -0)).toBe(true);
    expect(Array.from(decoded.time_s)).toEqual(Array.from(time_s));
    expect(Array.from(decoded.channels[0].values)).toEqual(Array.from(file.channels[0].values));
  });

  it('decodes from a buffer at an odd offset (a pooled read buffer)', () => {
    const encoded = encodeParsedTransient(parseTransient(fixture('fh-tt1_m07_cooling.csv'), 'm07.csv'));
    const pooled = new Uint8Array(encoded.length + 3);
    pooled.set(encoded, 3);
    expect(decodeParsedTransient(pooled.subarray(3))).not.toBeNull();
    expect(decodeParsedTransient(pooled.subarray(3))).toEqual(decodeParsedTransient(encoded));
  });

  it('answers null for truncated, corrupted or foreign bytes instead of a wrong transient', () => {
    const encoded = encodeParsedTransient(parseTransient(fixture('fh-tt1_m07_cooling.csv'), 'm07.csv'));
    expect(decodeParsedTransient(encoded.subarray(0, encoded.length - 8))).toBeNull();
    // A block that never reached the disk (the file is not fsynced): right length, zeros inside.
    const zeroed = Uint8Array.from(encoded);
    zeroed.fill(0, encoded.length - 4096, encoded.length - 2048);
    expect(decodeParsedTransient(zeroed)).toBeNull();
    expect(decodeParsedTransient(new Uint8Array(0))).toBeNull();
    expect(decodeParsedTransient(new TextEncoder().encode('time_s,zth_K_per_W\n'))).toBeNull();
    const otherByteOrder = Buffer.from(encoded);
    const header = otherByteOrder.indexOf('"LE"') >= 0 ? otherByteOrder.indexOf('"LE"') : otherByteOrder.indexOf('"BE"');
    otherByteOrder.write(otherByteOrder.toString('utf8', header, header + 4) === '"LE"' ? '"BE"' : '"LE"', header);
    expect(decodeParsedTransient(otherByteOrder)).toBeNull();
    // A header without the metadata's lines (as the layout before them wrote it) is not vouched for either; rewritten unchanged, it is.
    expect(decodeParsedTransient(withHeader(encoded, (header) => header))).toEqual(decodeParsedTransient(encoded));
    expect(decodeParsedTransient(withHeader(encoded, ({ meta_lines: _lines, ...older }) => older))).toBeNull();
  });
});

describe('TransientStore kept parses', () => {
  let dataDir: string;
  let store: TransientStore;
  const bytes = fixture('fh-tt1_m07_cooling.csv');
  const sha256 = sha256Hex(bytes);
  const shard = () => join(dataDir, 'parsed', sha256.slice(0, 2));
  beforeEach(async () => {
    dataDir = await mkdtemp(join(tmpdir(), 'heatpath-parsed-'));
    store = new TransientStore(dataDir);
  });
  afterEach(async () => {
    await rm(dataDir, { recursive: true, force: true });
  });

  it('keeps a parse per blob, format and parser version, and treats a damaged one as absent', async () => {
    expect(await store.getParsedTransient(sha256, 'csv')).toBeNull();
    const parsed = parseTransient(bytes, 'm07.csv');
    await store.putParsedTransient(sha256, 'csv', parsed);
    expect(await store.getParsedTransient(sha256, 'json')).toBeNull();
    expect(await store.getParsedTransient(sha256, 'csv')).toEqual(parsed);
    expect(await readdir(shard())).toEqual([`${sha256}.csv.${PARSER_VERSION}.bin`]);
    await writeFile(join(shard(), `${sha256}.csv.${PARSER_VERSION}.bin`), 'not a parse');
    expect(await store.getParsedTransient(sha256, 'csv')).toBeNull();
    expect(await store.getParsedTransient('../etc/passwd', 'csv')).toBeNull();
  });

  it("prunes other parser versions' parses, and neither the current ones nor a writer's temporary file", async () => {
    const parsed = parseTransient(bytes, 'm07.csv');
    await store.putParsedTransient(sha256, 'csv', parsed);
    // Named as an earlier release named them (by its algorithm version), and a temporary file as atomic-file.ts names them.
    await writeFile(join(shard(), `${sha256}.csv.analysis-2.bin`), 'stale');
    await writeFile(join(shard(), '.tmp-1234-0a1b2c3d4e5f'), 'in flight');
    expect(await store.pruneStaleParses()).toBe(1);
    expect((await readdir(shard())).sort()).toEqual(['.tmp-1234-0a1b2c3d4e5f', `${sha256}.csv.${PARSER_VERSION}.bin`]);
    expect(await store.getParsedTransient(sha256, 'csv')).toEqual(parsed);
    expect(await store.pruneStaleParses()).toBe(0);
  });
});
