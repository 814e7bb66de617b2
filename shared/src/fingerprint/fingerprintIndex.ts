/**
 * In-memory hash → (file, time) index for `tidemark match --against REPORT.json` and tests: an
 * open-addressing table of hash keys whose slots head a linked list of rows, so `add` and `lookup`
 * interleave at O(1) per hash (scan a batch, match each new file against the earlier ones). The
 * server keeps the same rows in PostgreSQL and scores them with `scorePostings` (offsetHistogram.ts).
 */
import { FINGERPRINT_VERSION } from "./fingerprinter.ts";
import { assertFingerprintShape, scoreOffsetHits, type ScoreOptions } from "./offsetHistogram.ts";
import type { Fingerprint, Match } from "./types.ts";

export interface LookupOptions extends ScoreOptions {
  /**
   * Hashes found in more than this many rows are skipped (stationary tones, test signals): they
   * cost time and carry no identity. Default 2000.
   */
  maxRowsPerHash?: number;
}

export interface FingerprintIndex {
  add(id: string, fp: Fingerprint): void;
  /** Candidates best first; `offsetSeconds` is where the query's t = 0 falls in the candidate. */
  lookup(fp: Fingerprint, options?: LookupOptions): Match[];
  readonly files: number;
  readonly rows: number;
}

const EMPTY = -1;
const MAX_LOAD = 0.6;

export function createFingerprintIndex(): FingerprintIndex {
  const ids: string[] = [];
  const known = new Set<string>();

  let rowFile = new Uint32Array(1 << 16);
  let rowTime = new Float32Array(1 << 16);
  let rowNext = new Int32Array(1 << 16);
  let rowCount = 0;

  let slotBits = 16;
  let slotKey = new Uint32Array(1 << slotBits);
  let slotHead = new Int32Array(1 << slotBits).fill(EMPTY);
  let slotRows = new Uint32Array(1 << slotBits);
  let usedSlots = 0;

  let hitFile = new Uint32Array(1 << 12);
  let hitOffset = new Float64Array(1 << 12);

  // Fibonacci hashing spreads the structured landmark hashes over the table.
  const slotOf = (hash: number, bits: number): number => Math.imul(hash, 0x9e3779b1) >>> (32 - bits);

  function findSlot(hash: number): number {
    const mask = (1 << slotBits) - 1;
    let s = slotOf(hash, slotBits);
    while (slotHead[s] !== EMPTY && slotKey[s] !== hash) s = (s + 1) & mask;
    return s;
  }

  function growSlots(): void {
    const oldKey = slotKey;
    const oldHead = slotHead;
    const oldRows = slotRows;
    slotBits++;
    slotKey = new Uint32Array(1 << slotBits);
    slotHead = new Int32Array(1 << slotBits).fill(EMPTY);
    slotRows = new Uint32Array(1 << slotBits);
    for (let s = 0; s < oldKey.length; s++) {
      if (oldHead[s] === EMPTY) continue;
      const t = findSlot(oldKey[s]);
      slotKey[t] = oldKey[s];
      slotHead[t] = oldHead[s];
      slotRows[t] = oldRows[s];
    }
  }

  function reserveRows(extra: number): void {
    if (rowCount + extra <= rowFile.length) return;
    const size = Math.max(2 * rowFile.length, rowCount + extra);
    if (size > 2 ** 31 - 1) throw new RangeError(`fingerprint index: more than 2^31 rows`);
    const f = new Uint32Array(size);
    f.set(rowFile.subarray(0, rowCount));
    rowFile = f;
    const t = new Float32Array(size);
    t.set(rowTime.subarray(0, rowCount));
    rowTime = t;
    const x = new Int32Array(size);
    x.set(rowNext.subarray(0, rowCount));
    rowNext = x;
  }

  function checkVersion(fp: Fingerprint, what: string): void {
    assertFingerprintShape(fp, what);
    if (fp.version !== FINGERPRINT_VERSION) {
      throw new RangeError(`${what}: fingerprint version ${fp.version}, this index holds version ${FINGERPRINT_VERSION}: re-scan the file`);
    }
  }

  return {
    get files() {
      return ids.length;
    },
    get rows() {
      return rowCount;
    },
    add(id, fp) {
      if (typeof id !== "string" || id.length === 0) throw new TypeError("fingerprint index: id must be a non-empty string");
      if (known.has(id)) throw new Error(`fingerprint index: "${id}" is already indexed`);
      checkVersion(fp, `fingerprint of "${id}"`);
      const file = ids.length;
      ids.push(id);
      known.add(id);
      const n = fp.hashes.length;
      reserveRows(n);
      for (let i = 0; i < n; i++) {
        const hash = fp.hashes[i];
        let s = findSlot(hash);
        if (slotHead[s] === EMPTY) {
          if (usedSlots + 1 > MAX_LOAD * slotKey.length) {
            growSlots();
            s = findSlot(hash);
          }
          slotKey[s] = hash;
          usedSlots++;
        }
        const r = rowCount++;
        rowFile[r] = file;
        rowTime[r] = fp.times[i];
        rowNext[r] = slotHead[s];
        slotHead[s] = r;
        slotRows[s]++;
      }
    },
    lookup(fp, options) {
      checkVersion(fp, "query");
      const maxRowsPerHash = options?.maxRowsPerHash ?? 2000;
      let hits = 0;
      for (let i = 0; i < fp.hashes.length; i++) {
        const s = findSlot(fp.hashes[i]);
        if (slotHead[s] === EMPTY || slotRows[s] > maxRowsPerHash) continue;
        if (hits + slotRows[s] > hitFile.length) {
          const size = Math.max(2 * hitFile.length, hits + slotRows[s]);
          const f = new Uint32Array(size);
          f.set(hitFile.subarray(0, hits));
          hitFile = f;
          const o = new Float64Array(size);
          o.set(hitOffset.subarray(0, hits));
          hitOffset = o;
        }
        const t = fp.times[i];
        for (let r = slotHead[s]; r !== EMPTY; r = rowNext[r]) {
          hitFile[hits] = rowFile[r];
          hitOffset[hits] = rowTime[r] - t;
          hits++;
        }
      }
      const scored = scoreOffsetHits({ candidates: hitFile, offsetsSeconds: hitOffset, count: hits }, options);
      return scored.map((c) => ({ id: ids[c.candidate], score: c.score, offsetSeconds: c.offsetSeconds }));
    },
  };
}
