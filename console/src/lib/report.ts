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

/** "line 3, column 12" or "line 3" or "". */
export function placeOf(e: Pick<UploadReportEntry, 'line' | 'column'>): string {
  if (!e.line) return '';
  return e.column ? `line ${e.line}, column ${e.column}` : `line ${e.line}`;
}

/** The message without a leading "field:" the server may already have put in front. */
export function bareMessage(field: string | undefined, message: string): string {
  if (!field) return message;
  const prefix = `${field}:`;
  let m = message.trim();
  while (m.toLowerCase().startsWith(prefix.toLowerCase())) m = m.slice(prefix.length).trim();
  return m;
}
