/**
 * Scheduled work that runs once however many Nadirline processes run.
 *
 *   registerJob(ctx, { name, periodOf(now), run(ctx, now) })   periodOf names the period a run covers
 *                                                              (a UTC day, a ten-minute slot ...)
 *   runDueJobs(ctx, now?, holder?) -> names of the jobs run      (tests call it with their own clock)
 *   startScheduler(ctx)                                          ticks every SCHEDULER_TICK_MS (not under NODE_ENV=test)
 *
 * Each job has one row in job_leases. A process runs a job only after one conditional UPDATE
 * took the lease: the row's `doneFor` is not this period and no other holder's lease is still
 * running. After the run it writes `doneFor` and frees the lease (`leaseUntil` null), leaving its
 * id in `holder` (so the row names who ran the period); a failed run frees the lease and records
 * the error, so the next tick (in any process) tries again; a process that dies mid-run keeps
 * the lease until `leaseUntil` (LEASE_MS after the claim), then any other process takes it.
 * The UPDATE is atomic on SQLite and PostgreSQL alike. Times are the app's clock (clock.ts), so
 * a test moves the lease's expiry with the clock it controls.
 */
import { nanoid } from 'nanoid';
import { Op, UniqueConstraintError } from 'sequelize';
import type { AppContext } from '../context.ts';
import { JobLease } from '../models/index.ts';
import { now as clockNow } from './clock.ts';

export const LEASE_MS = 10 * 60_000;

export interface Job {
  name: string;
  /** The period a run at `now` covers; the job runs once per distinct value. */
  periodOf(now: Date): string;
  run(ctx: AppContext, now: Date): Promise<void>;
}

declare module '../context.ts' {
  interface AppServices {
    jobs?: Job[];
    /** This process's holder id in job_leases. */
    schedulerId?: string;
  }
}

export function registerJob(ctx: AppContext, job: Job): void {
  const jobs = (ctx.services.jobs ??= []);
  if (!jobs.some((j) => j.name === job.name)) jobs.push(job);
}

/** A ten-minute slot, UTC: "2026-03-14T10:20". */
export function tenMinuteSlot(now: Date): string {
  const t = new Date(Math.floor(now.getTime() / 600_000) * 600_000);
  return t.toISOString().slice(0, 16);
}

/** A UTC day: "2026-03-14". */
export function utcDayOf(now: Date): string {
  return now.toISOString().slice(0, 10);
}

async function ensureRow(name: string): Promise<void> {
  if (await JobLease.findByPk(name, { attributes: ['name'] })) return;
  try {
    await JobLease.create({ name, doneFor: null, holder: null, leaseUntil: null, lastRunAt: null, lastError: null });
  } catch (err) {
    if (!(err instanceof UniqueConstraintError)) throw err;
  }
}

/** Takes the lease of `job` for `period` when nobody holds it and the period is not done. */
async function claim(job: Job, period: string, holder: string, now: Date): Promise<boolean> {
  await ensureRow(job.name);
  const [n] = await JobLease.update(
    { holder, leaseUntil: new Date(now.getTime() + LEASE_MS) },
    {
      where: {
        name: job.name,
        [Op.and]: [
          { [Op.or]: [{ doneFor: null }, { doneFor: { [Op.ne]: period } }] },
          { [Op.or]: [{ leaseUntil: null }, { leaseUntil: { [Op.lt]: now } }] },
        ],
      },
    },
  );
  return n === 1;
}

/** Runs every job whose period is not done and whose lease is free. `holder` defaults to this process's id. */
export async function runDueJobs(ctx: AppContext, now: Date = clockNow(ctx), holder: string = (ctx.services.schedulerId ??= `proc-${process.pid}-${nanoid(8)}`)): Promise<string[]> {
  const ran: string[] = [];
  for (const job of ctx.services.jobs ?? []) {
    const period = job.periodOf(now);
    if (!(await claim(job, period, holder, now))) continue;
    try {
      await job.run(ctx, now);
      const [n] = await JobLease.update({ doneFor: period, leaseUntil: null, lastRunAt: now, lastError: null }, { where: { name: job.name, holder } });
      ran.push(job.name);
      if (n === 1) ctx.logger.info({ job: job.name, period, holder }, 'scheduled job ran');
      else ctx.logger.warn({ job: job.name, period, holder }, 'scheduled job ran past its lease, which another process took meanwhile');
    } catch (err) {
      ctx.logger.error({ err, job: job.name }, 'scheduled job failed; it runs again on the next tick');
      await JobLease.update({ holder: null, leaseUntil: null, lastError: String((err as Error).message ?? err).slice(0, 500) }, { where: { name: job.name, holder } });
    }
  }
  return ran;
}

/**
 * Ticks every SCHEDULER_TICK_MS (configuration; the first tick after at most 5 s) until the app
 * closes. In-process tests (NODE_ENV=test) leave it off and call runDueJobs.
 */
export function startScheduler(ctx: AppContext): void {
  let running = false;
  const tick = async () => {
    if (running) return;
    running = true;
    try {
      await runDueJobs(ctx);
    } catch (err) {
      ctx.logger.error({ err }, 'scheduler tick failed');
    } finally {
      running = false;
    }
  };
  const every = ctx.config.SCHEDULER_TICK_MS;
  const timer = setInterval(() => void tick(), every);
  timer.unref();
  const first = setTimeout(() => void tick(), Math.min(5_000, every));
  first.unref();
  ctx.onClose(() => {
    clearInterval(timer);
    clearTimeout(first);
  });
}
