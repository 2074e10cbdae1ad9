import { randomUUID } from 'node:crypto';
import { readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import type { FhirResource } from '../fhir/gathered-data.js';
import { oxygenOrderType, type OrderResourceType } from '../fhir/is-oxygen-order.js';
import { NdjsonProblems, readNdjsonBatches, type NdjsonReadOptions } from './ndjson-reader.js';
import { conditionKnownMs, fhirTimeMs, matchesObservationPrefetch, observationTimes, orderEndMs, patientOf, referencedId } from './resource-times.js';
import { INDEX_SCHEMA, INDEX_SECONDARY, prepareIndexQueries, toOrder, type IndexQueries } from './index-queries.js';

/**
 * An on-disk SQLite index of a FHIR Bulk Data export, so that for one oxygen order the record as it
 * stood at its authored time can be fetched without holding the export in memory (see README.md).
 * One temporary file, under the directory given or the system's temp directory, deleted on close
 * unless kept. Journal in memory and no fsync: the file is a cache, rebuilt from the export if lost.
 */

export interface IndexedOrder {
  readonly type: OrderResourceType;
  readonly id: string;
  /** `Type/id`. */
  readonly reference: string;
  readonly patientId: string;
  readonly encounterId: string | undefined;
  readonly authoredMs: number;
  readonly resource: FhirResource;
}

/** Why an oxygen order in the export cannot be replayed; counted, never fatal. */
export type OrderSkipReason = 'no-authored-on' | 'no-patient';

export interface ExportIndexOptions extends NdjsonReadOptions {
  /** Where the index file goes (default: os.tmpdir()). */
  readonly indexDir?: string;
  /** Keep the index file after close (the CLI's --keep-index). */
  readonly keepIndex?: boolean;
}

export interface IndexCounts {
  readonly patients: number;
  readonly encounters: number;
  readonly observations: number;
  readonly conditions: number;
  readonly oxygenOrders: number;
  /** Request resources that are not oxygen orders (kept out of the index). */
  readonly otherOrders: number;
  /** Observations with no time at all: they cannot be placed before or after an order. */
  readonly undatedObservations: number;
  /** Resources of types the index does not hold. */
  readonly otherResources: number;
}

const ORDER_TYPES: ReadonlySet<string> = new Set(['MedicationRequest', 'ServiceRequest', 'DeviceRequest']);
const BATCH_ROWS = 2000;

export class ExportIndex {
  readonly #db: Database.Database;
  readonly #queries: IndexQueries;
  readonly #keep: boolean;
  #closed = false;

  /** Malformed NDJSON lines met while indexing (file and line number only). */
  readonly problems: NdjsonProblems;
  readonly counts: IndexCounts;
  readonly skippedOrders: Readonly<Record<OrderSkipReason, number>>;

  /** Use `buildExportIndex`. */
  constructor(
    readonly path: string,
    db: Database.Database,
    built: { problems: NdjsonProblems; counts: IndexCounts; skipped: Record<OrderSkipReason, number>; keep: boolean },
  ) {
    this.#db = db;
    this.#queries = prepareIndexQueries(db);
    this.#keep = built.keep;
    this.problems = built.problems;
    this.counts = built.counts;
    this.skippedOrders = built.skipped;
  }

  /** Every replayable oxygen order, in authoredOn order (then type and id), paged so memory stays flat. */
  *orders(pageSize = 100): Generator<IndexedOrder> {
    let after: { authoredMs: number; type: string; id: string } = { authoredMs: -Infinity, type: '', id: '' };
    for (;;) {
      const page = this.#queries.orderPage(after, pageSize);
      for (const row of page) {
        yield toOrder(row);
      }
      const last = page.at(-1);
      if (last === undefined || page.length < pageSize) {
        return;
      }
      after = { authoredMs: last.authored_ms, type: last.type, id: last.id };
    }
  }

  patient(id: string): FhirResource | undefined {
    return this.#queries.patient(id);
  }

  encounter(id: string): FhirResource | undefined {
    return this.#queries.encounter(id);
  }

  /**
   * The patient's Observations the record held at `atMs` (known at or before it), newest first, at
   * most `limit`: what the service's observations prefetch (`_sort=-date&_count=100`) returned then.
   * Only Observations with a LOINC code that prefetch asks for are returned.
   */
  observationsAsOf(patientId: string, atMs: number, limit = 100): FhirResource[] {
    return this.#queries.observationsAsOf(patientId, atMs, limit);
  }

  /** The patient's Observations measured in [fromMs, toMs], oldest first (any code; for audits). */
  observationsBetween(patientId: string, fromMs: number, toMs: number): FhirResource[] {
    return this.#queries.observationsBetween(patientId, fromMs, toMs);
  }

  /** The patient's Conditions recorded at or before `atMs`, and those with no date at all. */
  conditionsAsOf(patientId: string, atMs: number): FhirResource[] {
    return this.#queries.conditionsAsOf(patientId, atMs);
  }

  /**
   * The patient's other oxygen orders in force at `atMs`: authored strictly before it and not ended
   * by it. The export's status is what the order is now, not what it was then, so it is not used,
   * except that an order entered in error never counts.
   */
  ordersInForce(patientId: string, atMs: number, exceptReference?: string): IndexedOrder[] {
    return this.#queries.ordersInForce(patientId, atMs).filter((o) => o.reference !== exceptReference);
  }

  /** Every oxygen order of one patient, in authoredOn order. */
  ordersOf(patientId: string): IndexedOrder[] {
    return this.#queries.ordersOf(patientId);
  }

  /** Closes the database and deletes its file unless it was to be kept. Safe to call twice. */
  close(): void {
    if (this.#closed) {
      return;
    }
    this.#closed = true;
    this.#db.close();
    if (!this.#keep) {
      rmSync(this.path, { force: true });
    }
  }
}

/** The NDJSON files of an export directory, by name, so the index is the same whatever the file order. */
export function exportFiles(exportDir: string): string[] {
  return readdirSync(exportDir)
    .filter((name) => name.endsWith('.ndjson'))
    .sort()
    .map((name) => join(exportDir, name));
}

/** Reads every NDJSON file of `exportDir` into a new index file. Throws only when the directory cannot be read. */
export async function buildExportIndex(exportDir: string, options: ExportIndexOptions = {}): Promise<ExportIndex> {
  const files = exportFiles(exportDir);
  const path = join(options.indexDir ?? tmpdir(), `oxygen-order-checker-index-${randomUUID()}.sqlite`);
  const db = new Database(path);
  try {
    // Only this connection ever opens the file. In SQLite's normal locking mode every statement outside
    // a transaction takes and drops a file lock and re-reads the header to learn whether another
    // process changed the file, emptying the page cache when it did: a dozen system calls, about 15 µs,
    // around a lookup that takes 1 µs once the lock is held. Holding the lock until close skips them.
    db.pragma('locking_mode = EXCLUSIVE');
    // The rollback journal in memory: better-sqlite3 opens databases in SQLite's defensive mode, which
    // refuses `journal_mode = OFF` (the mode stays DELETE, a journal file made and deleted on every
    // commit). Bounded by one batch's changed pages.
    db.pragma('journal_mode = MEMORY');
    db.pragma('synchronous = OFF');
    // SQLite's own default page cache (2 MB; better-sqlite3 builds with 16 MB): the index is read in
    // patient-sized pieces, and a cache that fills as the export grows would make memory grow with it.
    db.pragma('cache_size = -2000');
    db.exec(INDEX_SCHEMA);
    const problems = new NdjsonProblems();
    const counts = { patients: 0, encounters: 0, observations: 0, conditions: 0, oxygenOrders: 0, otherOrders: 0, undatedObservations: 0, otherResources: 0 };
    const skipped: Record<OrderSkipReason, number> = { 'no-authored-on': 0, 'no-patient': 0 };
    const insert = {
      patient: db.prepare('INSERT OR REPLACE INTO patient (id, body) VALUES (?, ?)'),
      encounter: db.prepare('INSERT OR REPLACE INTO encounter (id, body) VALUES (?, ?)'),
      observation: db.prepare('INSERT INTO observation (patient, effective_ms, known_ms, prefetched, body) VALUES (?, ?, ?, ?, ?)'),
      condition: db.prepare('INSERT INTO condition (patient, known_ms, body) VALUES (?, ?, ?)'),
      order: db.prepare(
        'INSERT OR REPLACE INTO oxygen_order (type, id, patient, encounter, authored_ms, end_ms, in_error, body) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
      ),
    };
    const place = (resource: FhirResource, body: string): void => {
      const patient = patientOf(resource);
      switch (resource.resourceType) {
        case 'Patient':
          if (resource.id !== undefined) {
            insert.patient.run(resource.id, body);
            counts.patients += 1;
          }
          return;
        case 'Encounter':
          if (resource.id !== undefined) {
            insert.encounter.run(resource.id, body);
            counts.encounters += 1;
          }
          return;
        case 'Observation': {
          const times = observationTimes(resource);
          if (times === undefined || patient === undefined) {
            counts.undatedObservations += 1;
            return;
          }
          insert.observation.run(patient, times.effectiveMs, times.knownMs, matchesObservationPrefetch(resource) ? 1 : 0, body);
          counts.observations += 1;
          return;
        }
        case 'Condition':
          if (patient !== undefined) {
            insert.condition.run(patient, conditionKnownMs(resource) ?? null, body);
            counts.conditions += 1;
          }
          return;
        default:
          break;
      }
      if (!ORDER_TYPES.has(resource.resourceType)) {
        counts.otherResources += 1;
        return;
      }
      const type = oxygenOrderType(resource);
      if (type === undefined || resource.id === undefined) {
        counts.otherOrders += 1;
        return;
      }
      const authoredMs = fhirTimeMs(resource['authoredOn']);
      if (authoredMs === undefined) {
        skipped['no-authored-on'] += 1;
        return;
      }
      if (patient === undefined) {
        skipped['no-patient'] += 1;
        return;
      }
      const encounter = referencedId(resource['encounter'], 'Encounter') ?? null;
      const inError = resource['status'] === 'entered-in-error' ? 1 : 0;
      insert.order.run(type, resource.id, patient, encounter, authoredMs, orderEndMs(resource) ?? null, inError, body);
      counts.oxygenOrders += 1;
    };
    let pending = 0;
    db.exec('BEGIN');
    for (const file of files) {
      for await (const records of readNdjsonBatches(file, problems, options)) {
        for (const { resource, text } of records) {
          // The line as read is the resource's JSON already: stored as it is, not written out again.
          place(resource, text);
          pending += 1;
          if (pending >= BATCH_ROWS) {
            db.exec('COMMIT; BEGIN');
            pending = 0;
          }
        }
      }
    }
    db.exec('COMMIT');
    // Secondary indexes after the load: one sort each instead of a B-tree update per row.
    db.exec(INDEX_SECONDARY);
    return new ExportIndex(path, db, { problems, counts, skipped, keep: options.keepIndex === true });
  } catch (error) {
    db.close();
    if (options.keepIndex !== true) {
      rmSync(path, { force: true });
    }
    throw error;
  }
}
