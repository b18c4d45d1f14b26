/** Dates, ages and numbers as the console shows them. Times are shown in UTC and local. */

const dtf = new Intl.DateTimeFormat('en-GB', {
  year: 'numeric',
  month: 'short',
  day: '2-digit',
  hour: '2-digit',
  minute: '2-digit',
  timeZone: 'UTC',
  hourCycle: 'h23',
});
const dayFmt = new Intl.DateTimeFormat('en-GB', { year: 'numeric', month: 'short', day: '2-digit', timeZone: 'UTC' });

/** "04 Mar 2031, 14:05 UTC"; "—" when absent. */
export function formatUtc(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : `${dtf.format(d)} UTC`;
}

export function formatDay(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso.length === 10 ? `${iso}T00:00:00Z` : iso);
  return Number.isNaN(d.getTime()) ? iso : dayFmt.format(d);
}

/** "5 min ago", "in 3 h", "2 days ago": the nearest unit, rounded down. */
export function formatRelative(iso: string | null | undefined, nowMs = Date.now()): string {
  if (!iso) return 'never';
  const t = Date.parse(iso);
  if (Number.isNaN(t)) return iso;
  const s = Math.round((t - nowMs) / 1000);
  const a = Math.abs(s);
  const [n, unit] =
    a < 60 ? [a, 's'] : a < 3600 ? [Math.floor(a / 60), 'min'] : a < 86400 ? [Math.floor(a / 3600), 'h'] : [Math.floor(a / 86400), Math.floor(a / 86400) === 1 ? 'day' : 'days'];
  if (a < 45) return 'just now';
  return s < 0 ? `${n} ${unit} ago` : `in ${n} ${unit}`;
}

/** Element-set age in days: "0.4 days", "12 days". */
export function formatAgeDays(days: number | null | undefined): string {
  if (days === null || days === undefined || !Number.isFinite(days)) return '—';
  if (days < 1) return `${(Math.round(days * 24 * 10) / 10).toFixed(1)} h`;
  if (days < 10) return `${days.toFixed(1)} days`;
  return `${Math.round(days)} days`;
}

const nf = new Intl.NumberFormat('en-GB');
export function formatCount(n: number | null | undefined): string {
  return n === null || n === undefined || !Number.isFinite(n) ? '—' : nf.format(n);
}

export function formatNumber(n: number | null | undefined, digits: number): string {
  if (n === null || n === undefined || !Number.isFinite(n)) return '—';
  return n.toLocaleString('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: digits });
}

/** YYYY-MM-DD (UTC) of a date. */
export function isoDay(d: Date): string {
  return d.toISOString().slice(0, 10);
}

export function addDays(day: string, n: number): string {
  const d = new Date(`${day}T00:00:00Z`);
  d.setUTCDate(d.getUTCDate() + n);
  return isoDay(d);
}

/** "€39", "€4.50": a plan price in its ISO 4217 currency; "39 XYZ" for a code Intl does not know. */
export function formatPrice(amount: number, currency: string | null | undefined): string {
  if (!Number.isFinite(amount)) return '—';
  const code = (currency ?? '').trim().toUpperCase();
  const digits = Number.isInteger(amount) ? 0 : 2;
  try {
    if (!code) throw new RangeError('no currency');
    return new Intl.NumberFormat('en-GB', { style: 'currency', currency: code, minimumFractionDigits: digits, maximumFractionDigits: 2 }).format(amount);
  } catch {
    return `${new Intl.NumberFormat('en-GB', { minimumFractionDigits: digits, maximumFractionDigits: 2 }).format(amount)}${code ? ` ${code}` : ''}`;
  }
}

/** Below this size (deg per revolution) the ground track's equator crossing counts as not moving. */
export const SHIFT_STILL_DEG = 0.05;

/**
 * The ground-track shift per revolution as people read it. The API's `westwardShiftPerRevDeg` lies
 * in (-180, 180]: positive moves the next equator crossing west, negative east, about 0 leaves it
 * where it was (a geosynchronous period). "23.76° west", "179.95° east",
 * "Stays in place (geostationary)" for a near-circular, near-equatorial one.
 */
export function formatGroundTrackShift(westDeg: number | null | undefined, orbit: { inclinationDeg?: number; eccentricity?: number } = {}): string {
  if (westDeg === null || westDeg === undefined || !Number.isFinite(westDeg)) return '—';
  if (Math.abs(westDeg) < SHIFT_STILL_DEG) {
    const geostationary = (orbit.inclinationDeg ?? 0) < 1 && (orbit.eccentricity ?? 0) < 0.01;
    return geostationary ? 'Stays in place (geostationary)' : 'Same longitude each orbit (geosynchronous)';
  }
  return `${formatNumber(Math.abs(westDeg), 2)}° ${westDeg > 0 ? 'west' : 'east'}`;
}

/** A share of a total as people read it: "37 %", "<1 %" for a small but real share, "0 %" only for none, "—" without a total. */
export function formatShare(n: number, total: number): string {
  if (!(total > 0) || !Number.isFinite(n)) return '—';
  if (n <= 0) return '0 %';
  const pct = (n / total) * 100;
  if (pct < 1) return '<1 %';
  if (pct > 99 && n < total) return '>99 %';
  return `${Math.round(pct)} %`;
}

/** "02 Dec, 14:00" for a UTC hour "2026-12-02T14". */
export function formatHour(hour: string): string {
  const d = new Date(`${hour}:00:00Z`);
  if (Number.isNaN(d.getTime())) return hour;
  return `${dayFmt.format(d).replace(/ \d{4}$/, '')}, ${hour.slice(11, 13)}:00`;
}
