/**
 * Satellites and element sets in the console (docs/console-api.md "Satellites and element sets").
 * Parsing, storage and the current set live in services/satellites.ts (S2); here: roles, bodies,
 * multipart files and the audit trail.
 */
import multer from 'multer';
import type { Request } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../context.ts';
import { readMultipart } from '../../http/input-guards.ts';
import { HttpError, withUploadLimits } from '../../http/problem.ts';
import { orgAuth } from '../../http/roles.ts';
import { parseBody, parseQuery } from '../../http/validate.ts';
import { ElementSetRecord, type Satellite } from '../../models/index.ts';
import { changesOf, recordAudit } from '../../services/audit.ts';
import { parsedOf } from '../../services/orbit-cache.ts';
import { EXPORT_FORMATS, getSatelliteService, unprocessable, type ElementFormat, type UploadResult } from '../../services/satellites.ts';
import { param } from './params.ts';
import { ApiRoutes } from './routes.ts';

/** Upload limits for multipart element-set files. */
export const UPLOAD_MAX_FILE_BYTES = 2 * 1024 * 1024;
export const UPLOAD_MAX_FILES = 20;

const FORMAT = z.enum(EXPORT_FORMATS as [ElementFormat, ...ElementFormat[]]);
const CreateBody = z.object({
  name: z.string().trim().min(1, { message: 'Enter a name.' }).max(200),
  description: z.string().max(5000).optional(),
  elements: z.string().max(2_000_000).optional(),
  format: FORMAT.optional(),
});
const UpdateBody = z
  .object({ name: z.string().trim().min(1).max(200).optional(), description: z.string().max(5000).optional() })
  .refine((b) => b.name !== undefined || b.description !== undefined, { message: 'Send a name or a description to change.' });
const UploadBody = z
  .object({ text: z.string().max(2_000_000).optional(), format: FORMAT.optional(), kepler: z.record(z.string(), z.unknown()).optional() })
  .refine((b) => b.text !== undefined || b.kepler !== undefined, { message: 'Send element sets as text, as kepler elements, or as files.' });
const ExportQuery = z.object({ format: FORMAT.default('tle') });

const upload = readMultipart(
  multer({ storage: multer.memoryStorage(), limits: { fileSize: UPLOAD_MAX_FILE_BYTES, files: UPLOAD_MAX_FILES, fields: 10 } }).any(),
  (err) => withUploadLimits(err, { fileBytes: UPLOAD_MAX_FILE_BYTES, files: UPLOAD_MAX_FILES }),
);

function uploadedFiles(req: Request): Array<{ name: string; text: string }> {
  const files = (req.files as Express.Multer.File[] | undefined) ?? [];
  return files
    .filter((f) => f.fieldname === 'files[]' || f.fieldname === 'files' || f.fieldname === 'file')
    .map((f) => ({ name: f.originalname || 'upload', text: f.buffer.toString('utf8') }));
}

export function satelliteRoutes(ctx: AppContext): ApiRoutes {
  const r = new ApiRoutes();
  const sats = getSatelliteService(ctx);

  async function views(satellites: Satellite[]) {
    const now = new Date();
    const currentIds = satellites.map((s) => s.currentElementSetId).filter((v): v is string => !!v);
    const records = currentIds.length ? await ElementSetRecord.findAll({ where: { id: currentIds }, attributes: ['uploadedByUserId', 'uploadedByKeyId'] }) : [];
    const uploaders = await sats.uploaderNames(records);
    return Promise.all(satellites.map((s) => sats.view(s, now, uploaders)));
  }

  async function auditUpload(auth: ReturnType<typeof orgAuth>, satellite: Satellite, result: UploadResult, how: string) {
    if (result.accepted === 0) return;
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'element-set.upload',
      targetType: 'satellite',
      targetId: satellite.id,
      detail: { satellite: satellite.name, how, accepted: result.accepted, rejected: result.rejected, elementSetIds: result.created.slice(0, 20).map((c) => c.id) },
    });
  }

  r.get('/orgs/:org/satellites', 'satellites.read', async (_req, res) => {
    const list = await sats.listSatellites(orgAuth(res).organization.id);
    res.json({ satellites: await views(list) });
  });

  r.post('/orgs/:org/satellites', 'satellites.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(CreateBody, req);
    const { satellite, upload: result } = await sats.createSatellite(
      auth.organization.id,
      { name: body.name, description: body.description, elementsText: body.elements, format: body.format },
      { userId: auth.user.id },
    );
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'satellite.create', targetType: 'satellite', targetId: satellite.id, detail: { name: satellite.name } });
    if (result) await auditUpload(auth, satellite, result, 'text');
    await satellite.reload();
    const [view] = await views([satellite]);
    res.status(201).json({ satellite: view, ...(result ? { report: result.report, accepted: result.accepted, rejected: result.rejected } : {}) });
  });

  r.get('/orgs/:org/satellites/:id', 'satellites.read', async (req, res) => {
    const satellite = await sats.getSatellite(orgAuth(res).organization.id, param(req, 'id'));
    const [view] = await views([satellite]);
    res.json({ satellite: view, current: view?.current ?? null, derived: view?.derived ?? null });
  });

  r.patch('/orgs/:org/satellites/:id', 'satellites.write', async (req, res) => {
    const auth = orgAuth(res);
    const body = parseBody(UpdateBody, req);
    const before = await sats.getSatellite(auth.organization.id, param(req, 'id'));
    const was = { name: before.name, description: before.description };
    const satellite = await sats.updateSatellite(auth.organization.id, before.id, body);
    const changes = changesOf(was, { name: satellite.name, description: satellite.description });
    if (Object.keys(changes).length > 0) {
      await recordAudit(ctx, {
        organizationId: auth.organization.id,
        actorUserId: auth.user.id,
        action: 'satellite.update',
        targetType: 'satellite',
        targetId: satellite.id,
        detail: { name: satellite.name, changes },
      });
    }
    const [view] = await views([satellite]);
    res.json({ satellite: view });
  });

  r.delete('/orgs/:org/satellites/:id', 'satellites.write', async (req, res) => {
    const auth = orgAuth(res);
    const satellite = await sats.getSatellite(auth.organization.id, param(req, 'id'));
    await sats.deleteSatellite(auth.organization.id, satellite.id);
    await recordAudit(ctx, { organizationId: auth.organization.id, actorUserId: auth.user.id, action: 'satellite.delete', targetType: 'satellite', targetId: satellite.id, detail: { name: satellite.name } });
    res.status(204).end();
  });

  r.get('/orgs/:org/satellites/:id/element-sets', 'satellites.read', async (req, res) => {
    const satellite = await sats.getSatellite(orgAuth(res).organization.id, param(req, 'id'));
    const records = await sats.listElementSets(satellite.id);
    const uploaders = await sats.uploaderNames(records);
    const now = new Date();
    // With the figures the history chart draws: apogee and perigee altitude (km), mean motion (rev/day).
    res.json({
      elementSets: records.map((rec) => {
        const es = parsedOf(rec);
        const d = sats.derived(es, now);
        return {
          ...sats.summary(rec, es, now, uploaders),
          meanMotionRevPerDay: es.meanMotionRevPerDay,
          apogeeAltKm: Math.round(d.apogeeAltKm * 1000) / 1000,
          perigeeAltKm: Math.round(d.perigeeAltKm * 1000) / 1000,
        };
      }),
    });
  });

  r.post('/orgs/:org/satellites/:id/element-sets', 'element-sets.write', upload, async (req, res) => {
    const auth = orgAuth(res);
    const satellite = await sats.getSatellite(auth.organization.id, param(req, 'id'));
    let result: UploadResult;
    let how: string;
    if (req.is('multipart/form-data')) {
      const files = uploadedFiles(req);
      const text = typeof req.body?.text === 'string' && req.body.text.trim() ? (req.body.text as string) : undefined;
      if (files.length === 0 && !text) {
        throw new HttpError('validation-failed', 'Attach one or more element-set files in the files[] field.', { errors: [{ where: 'files[]', field: 'files', message: 'no file attached' }] });
      }
      result = await sats.addElementSets(satellite, { files, text }, { userId: auth.user.id });
      how = files.length ? `files: ${files.map((f) => f.name).join(', ')}`.slice(0, 300) : 'text';
    } else {
      const body = parseBody(UploadBody, req);
      result = await sats.addElementSets(satellite, { text: body.text, format: body.format, kepler: body.kepler }, { userId: auth.user.id });
      how = body.kepler !== undefined ? 'kepler' : 'text';
    }
    await auditUpload(auth, satellite, result, how);
    if (result.accepted === 0) throw unprocessable(result.report);
    const now = new Date();
    const uploaders = await sats.uploaderNames(result.created);
    res.status(201).json({
      report: result.report,
      accepted: result.accepted,
      rejected: result.rejected,
      elementSets: result.created.map((rec) => sats.summary(rec, parsedOf(rec), now, uploaders)),
    });
  });

  r.post('/orgs/:org/element-sets/:esId/confirm', 'element-sets.confirm', async (req, res) => {
    const auth = orgAuth(res);
    const record = await sats.confirmElementSet(auth.organization.id, param(req, 'esId'), auth.user.id);
    await recordAudit(ctx, {
      organizationId: auth.organization.id,
      actorUserId: auth.user.id,
      action: 'element-set.confirm',
      targetType: 'satellite',
      targetId: record.satelliteId,
      detail: { elementSetId: record.id, epoch: parsedOf(record).epochIso, continuity: record.continuityClass },
    });
    const uploaders = await sats.uploaderNames([record]);
    res.json({ elementSet: sats.summary(record, parsedOf(record), new Date(), uploaders) });
  });

  r.get('/orgs/:org/element-sets/:esId/export', 'satellites.read', async (req, res) => {
    const { format } = parseQuery(ExportQuery, req);
    const record = await sats.getElementSet(orgAuth(res).organization.id, param(req, 'esId'));
    const out = sats.exportElementSet(record, format);
    // attachment() sets a type from the file extension: set ours after it.
    res.attachment(out.filename);
    res.set('Content-Type', out.contentType);
    res.send(out.text);
  });

  return r;
}
