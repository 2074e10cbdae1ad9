import type Database from 'better-sqlite3';
import type { FhirResource } from '../fhir/gathered-data.js';
import type { OrderResourceType } from '../fhir/is-oxygen-order.js';
import type { IndexedOrder } from './export-index.js';

/**
 * The export index's tables and its prepared queries. Times are integer milliseconds since the
 * epoch (UTC), so comparisons are exact whatever offset the export wrote its times in.
 */

export const INDEX_SCHEMA = `
CREATE TABLE patient (id TEXT PRIMARY KEY, body TEXT NOT NULL) WITHOUT ROWID;
CREATE TABLE encounter (id TEXT PRIMARY KEY, body TEXT NOT NULL) WITHOUT ROWID;
CREATE TABLE observation (patient TEXT NOT NULL, effective_ms INTEGER NOT NULL, known_ms INTEGER NOT NULL,
  prefetched INTEGER NOT NULL, body TEXT NOT NULL);
CREATE TABLE condition (patient TEXT NOT NULL, known_ms INTEGER, body TEXT NOT NULL);
CREATE TABLE oxygen_order (type TEXT NOT NULL, id TEXT NOT NULL, patient TEXT NOT NULL, encounter TEXT,
  authored_ms INTEGER NOT NULL, end_ms INTEGER, in_error INTEGER NOT NULL, body TEXT NOT NULL,
  PRIMARY KEY (type, id));
`;

export const INDEX_SECONDARY = `
CREATE INDEX observation_by_patient_time ON observation (patient, effective_ms);
CREATE INDEX condition_by_patient ON condition (patient, known_ms);
CREATE INDEX order_by_time ON oxygen_order (authored_ms, type, id);
CREATE INDEX order_by_patient ON oxygen_order (patient, authored_ms);
`;

export interface OrderRow {
  readonly type: OrderResourceType;
  readonly id: string;
  readonly patient: string;
  readonly encounter: string | null;
  readonly authored_ms: number;
  readonly body: string;
}

export function toOrder(row: OrderRow): IndexedOrder {
  return {
    type: row.type,
    id: row.id,
    reference: `${row.type}/${row.id}`,
    patientId: row.patient,
    encounterId: row.encounter ?? undefined,
    authoredMs: row.authored_ms,
    resource: JSON.parse(row.body) as FhirResource,
  };
}

const parseBody = (row: { readonly body: string }): FhirResource => JSON.parse(row.body) as FhirResource;

export interface IndexQueries {
  /** A page of orders as rows; each is parsed only when it is reached (`toOrder`), so a page holds no parsed JSON. */
  orderPage(after: { authoredMs: number; type: string; id: string }, limit: number): OrderRow[];
  patient(id: string): FhirResource | undefined;
  encounter(id: string): FhirResource | undefined;
  observationsAsOf(patient: string, atMs: number, limit: number): FhirResource[];
  observationsBetween(patient: string, fromMs: number, toMs: number): FhirResource[];
  conditionsAsOf(patient: string, atMs: number): FhirResource[];
  ordersInForce(patient: string, atMs: number): IndexedOrder[];
  ordersOf(patient: string): IndexedOrder[];
}

export function prepareIndexQueries(db: Database.Database): IndexQueries {
  const ORDER_COLUMNS = 'type, id, patient, encounter, authored_ms, body';
  // The row value compares as the index order_by_time sorts, so SQLite seeks to the last order of
  // the page before and reads on from there; the same test spelt out with OR is scanned from the
  // index's start on every page, and paging through n orders takes time in n² (SQLite query plans).
  const orderPage = db.prepare<[number, string, string, number], OrderRow>(
    `SELECT ${ORDER_COLUMNS} FROM oxygen_order
     WHERE (authored_ms, type, id) > (?, ?, ?)
     ORDER BY authored_ms, type, id LIMIT ?`,
  );
  // The first page starts below every time: -Infinity does not bind as an integer.
  const firstPage = db.prepare<[number], OrderRow>(`SELECT ${ORDER_COLUMNS} FROM oxygen_order ORDER BY authored_ms, type, id LIMIT ?`);
  const patient = db.prepare<[string], { body: string }>('SELECT body FROM patient WHERE id = ?');
  const encounter = db.prepare<[string], { body: string }>('SELECT body FROM encounter WHERE id = ?');
  const observationsAsOf = db.prepare<[string, number, number], { body: string }>(
    `SELECT body FROM observation WHERE patient = ? AND known_ms <= ? AND prefetched = 1
     ORDER BY effective_ms DESC LIMIT ?`,
  );
  const observationsBetween = db.prepare<[string, number, number], { body: string }>(
    'SELECT body FROM observation WHERE patient = ? AND effective_ms BETWEEN ? AND ? ORDER BY effective_ms',
  );
  const conditionsAsOf = db.prepare<[string, number], { body: string }>(
    'SELECT body FROM condition WHERE patient = ? AND (known_ms IS NULL OR known_ms <= ?) ORDER BY known_ms, rowid',
  );
  const ordersInForce = db.prepare<[string, number, number], OrderRow>(
    `SELECT ${ORDER_COLUMNS} FROM oxygen_order
     WHERE patient = ? AND authored_ms < ? AND (end_ms IS NULL OR end_ms > ?) AND in_error = 0
     ORDER BY authored_ms, type, id`,
  );
  const ordersOf = db.prepare<[string], OrderRow>(`SELECT ${ORDER_COLUMNS} FROM oxygen_order WHERE patient = ? ORDER BY authored_ms, type, id`);
  return {
    orderPage: (after, limit) =>
      after.authoredMs === -Infinity
        ? firstPage.all(limit)
        : orderPage.all(after.authoredMs, after.type, after.id, limit),
    patient: (id) => {
      const row = patient.get(id);
      return row === undefined ? undefined : parseBody(row);
    },
    encounter: (id) => {
      const row = encounter.get(id);
      return row === undefined ? undefined : parseBody(row);
    },
    observationsAsOf: (p, atMs, limit) => observationsAsOf.all(p, atMs, limit).map(parseBody),
    observationsBetween: (p, fromMs, toMs) => observationsBetween.all(p, fromMs, toMs).map(parseBody),
    conditionsAsOf: (p, atMs) => conditionsAsOf.all(p, atMs).map(parseBody),
    ordersInForce: (p, atMs) => ordersInForce.all(p, atMs, atMs).map(toOrder),
    ordersOf: (p) => ordersOf.all(p).map(toOrder),
  };
}
