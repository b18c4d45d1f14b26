/** Upload reports: from a 201 answer, or rebuilt from a 422 problem when nothing was accepted. */
import type { ApiError } from '../api/client.ts';
import type { UploadReport, UploadReportEntry } from '../api/types.ts';

function isEntry(v: unknown): v is UploadReportEntry {
  return !!v && typeof v === 'object' && typeof (v as UploadReportEntry).ok === 'boolean';
}

/** The per-entry report a 422 carries, as a `report` member or as field-level `errors`. */
export function reportFromProblem(err: ApiError): UploadReport | null {
  const raw = err.body.report;
  if (Array.isArray(raw) && raw.every(isEntry)) {
    const report = raw as UploadReportEntry[];
    return { report, accepted: report.filter((r) => r.ok).length, rejected: report.filter((r) => !r.ok).length };
  }
  if (err.status !== 422 || err.errors.length === 0) return null;
  const report: UploadReportEntry[] = err.errors.map((e, i) => {
    const entry: UploadReportEntry = { index: i + 1, line: e.line ?? 0, ok: false, message: e.message };
    if (e.field) entry.field = e.field;
    if (e.column !== undefined) entry.column = e.column;
    const file = (e as { file?: unknown }).file;
    if (typeof file === 'string') entry.file = file;
    return entry;
  });
  return { report, accepted: 0, rejected: report.length };
}

/** "Line 3, column 12" or "Line 3" or "". */
export function placeOf(e: Pick<UploadReportEntry, 'line' | 'column'>): string {
  if (!e.line) return '';
  return e.column ? `Line ${e.line}, column ${e.column}` : `Line ${e.line}`;
}

/**
 * What a field is called in the report. Field names of the whole text (`text`, `json`, ...) get
 * no label: the message speaks for itself. OMM keywords (`MEAN_MOTION`) stay as written, since
 * that is what the file holds; other camelCase names become words.
 */
const FIELD_LABELS: Record<string, string | null> = {
  text: null,
  json: null,
  xml: null,
  omm: null,
  input: null,
  kepler: null,
  layout: 'Layout',
  checksum: 'Checksum',
  lineNumber: 'Line number',
  line1: 'TLE line 1',
  line2: 'TLE line 2',
  name: 'Name',
  catalogNumber: 'Catalog number',
  classification: 'Classification',
  intlDesignator: 'International designator',
  epoch: 'Epoch',
  epochUs: 'Epoch',
  meanMotionRevPerDay: 'Mean motion',
  periodMin: 'Period',
  semiMajorAxisKm: 'Semi-major axis',
  eccentricity: 'Eccentricity',
  inclinationDeg: 'Inclination',
  raanDeg: 'RAAN',
  argPerigeeDeg: 'Argument of perigee',
  meanAnomalyDeg: 'Mean anomaly',
  bstar: 'B*',
  meanMotionDot: 'First derivative of mean motion',
  meanMotionDdot: 'Second derivative of mean motion',
  ephemerisType: 'Ephemeris type',
  elementSetNo: 'Element set number',
  revAtEpoch: 'Revolution number at epoch',
};

export function fieldLabel(field: string | undefined): string | null {
  if (!field) return null;
  if (field in FIELD_LABELS) return FIELD_LABELS[field] ?? null;
  if (/^[A-Z0-9_]+$/.test(field)) return field;
  const words = field.replace(/([a-z0-9])([A-Z])/g, '$1 $2').toLowerCase();
  return words.charAt(0).toUpperCase() + words.slice(1);
}

function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/**
 * The message without what the report already shows elsewhere: a leading file name, "field:" and
 * "line L column C:" (the server may put any of them in front, in any order).
 */
export function bareMessage(field: string | undefined, message: string, file?: string): string {
  const heads: RegExp[] = [/^line \d+,? column \d+\s*[:,—-]\s*/i, /^line \d+\s*[:,—-]\s*/i, /^column \d+\s*[:,—-]\s*/i];
  if (field) heads.push(new RegExp(`^${escapeRe(field)}\\s*:\\s*`, 'i'));
  if (file) heads.push(new RegExp(`^${escapeRe(file)}\\s*[:,]\\s*`, 'i'));
  let m = message.trim();
  for (let changed = true; changed; ) {
    changed = false;
    for (const h of heads) {
      const next = m.replace(h, '');
      if (next !== m) {
        m = next.trim();
        changed = true;
      }
    }
  }
  return m;
}

/** One line for an entry: "Line 6, column 69 — Checksum: expected 3, found 4". */
export function describeEntry(e: UploadReportEntry): string {
  const place = placeOf(e);
  let what: string;
  if (e.ok) what = e.duplicate ? 'saved (the same as a set already held)' : 'saved';
  else {
    const label = fieldLabel(e.field);
    const text = bareMessage(e.field, e.message ?? e.code ?? 'not usable', e.file);
    what = label ? `${label}: ${text}` : text;
  }
  if (!place) return what.charAt(0).toUpperCase() + what.slice(1);
  return `${place} — ${what}`;
}
