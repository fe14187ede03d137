// POST /certificates (one certificate as JSON), POST /imports (a file), GET /imports/{id}.
import { createRoute, z, type OpenAPIHono } from '@hono/zod-openapi';
import { eq } from 'drizzle-orm';
import type { Db } from '../../db/connection.ts';
import { imports } from '../../db/schema.ts';
import { certificateSchema } from '../../ingest/certificateSchema.ts';
import { runImport, type ImportFormat, type ImportReport } from '../../ingest/importPipeline.ts';
import { loadMillLayout } from '../../ingest/millLayout.ts';
import { ApiError, errorBodySchema } from '../errors.ts';
import type { AppEnv } from '../context.ts';

const flag = z
  .enum(['true', 'false', '1', '0'])
  .optional()
  .transform((v) => v === 'true' || v === '1');

const reportSchema = z
  .object({
    importId: z.number().int(),
    status: z.enum(['accepted', 'partially_accepted', 'rejected', 'validated', 'duplicate']),
    duplicateOf: z.number().int().optional(),
    limit: z.object({ name: z.string(), value: z.number(), status: z.number().int() }).optional(),
    summary: z.record(z.string(), z.number()),
    problems: z.array(z.object({ row: z.number().optional(), column: z.string().optional(), path: z.string(), message: z.string() })),
    items: z.array(z.record(z.string(), z.unknown())),
    mapping: z
      .object({
        headerRow: z.number().int(),
        columns: z.array(z.record(z.string(), z.unknown())),
        missing: z.array(z.string()),
        notes: z.array(z.string()),
        ownLayout: z.boolean(),
        layout: z.record(z.string(), z.unknown()).nullable(),
        lines: z.array(z.string()),
      })
      .optional()
      .openapi({ description: 'A table read without a layout: which column became what (columns), what is missing, in sentences (lines); layout is the same mapping as a mill layout to save.' }),
    dryRun: z.object({ wouldWrite: z.number().int(), message: z.string() }).optional(),
  })
  .openapi('ImportReport');

const FORMAT_BY_TYPE: Record<string, ImportFormat> = {
  'application/json': 'json',
  'text/csv': 'csv',
  'application/csv': 'csv',
  'text/plain': 'csv',
  'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet': 'xlsx',
};

function formatOf(contentType: string | undefined, filename: string | undefined, explicit: string | undefined): ImportFormat {
  if (explicit === 'json' || explicit === 'csv' || explicit === 'xlsx') return explicit;
  const ext = filename?.toLowerCase().match(/\.(json|csv|xlsx)$/)?.[1];
  if (ext) return ext as ImportFormat;
  const type = contentType?.split(';')[0].trim().toLowerCase();
  if (type && FORMAT_BY_TYPE[type]) return FORMAT_BY_TYPE[type];
  throw new ApiError(415, 'unknown_format', 'Say which format the file is in: format=csv, xlsx or json (or send a file name with that extension).');
}

/** A mill-scoped caller that sent another mill's data gets 403, whatever else the document held. */
function refuseForeignMill(report: ImportReport) {
  const foreign = report.items.filter((i) => i.status === 'forbidden');
  if (foreign.length) {
    throw new ApiError(403, 'forbidden_mill', foreign[0].problems[0]?.message ?? 'this caller may not send data of that mill', {
      importId: report.importId,
      items: foreign.map((i) => i.key),
    });
  }
}

const statusOfReport = (report: ImportReport) =>
  report.limit?.status ?? (report.status === 'accepted' || report.status === 'partially_accepted' ? 201 : report.status === 'rejected' ? 422 : 200);

export function ingestRoutes(app: OpenAPIHono<AppEnv>, db: Db) {
  // The body is validated by the import pipeline (so that even an invalid certificate is archived and
  // every problem is reported); the schema is registered for the OpenAPI document only.
  app.openAPIRegistry.registerPath({
    method: 'post',
    path: '/api/v1/certificates',
    tags: ['ingest'],
    summary: 'Store one mill certificate (chemistry, lots, end-quench curves)',
    description:
      'Idempotent: the same certificate again changes nothing. A different certificate for a heat already on file is refused with 409 and the differences, unless sent with revision=true, which stores it as the next revision and keeps the old one. Role: mill (own mill only), engineer, admin.',
    request: {
      query: z.object({ revision: z.enum(['true', 'false']).optional(), createMissing: z.enum(['true', 'false']).optional() }),
      body: { content: { 'application/json': { schema: certificateSchema() } }, required: true },
    },
    responses: {
      201: { description: 'Stored (new heat or new revision)', content: { 'application/json': { schema: reportSchema } } },
      200: { description: 'Already on file, unchanged', content: { 'application/json': { schema: reportSchema } } },
      409: { description: 'A different certificate is on file for this heat', content: { 'application/json': { schema: errorBodySchema } } },
      422: { description: 'Invalid certificate', content: { 'application/json': { schema: errorBodySchema } } },
    },
  });
  app.post('/api/v1/certificates', async (c) => {
    const bytes = new Uint8Array(await c.req.arrayBuffer());
    const q = c.req.query();
    const millScope = c.get('auth')?.millScope;
    if (/^\s*\[/.test(Buffer.from(bytes.subarray(0, 64)).toString('utf8'))) {
      throw new ApiError(400, 'one_certificate_only', 'Send one certificate as a JSON object here; several go to POST /api/v1/imports as a file.');
    }
    const report = await runImport(db, {
      bytes,
      format: 'json',
      filename: 'api-certificate.json',
      createdBy: c.get('auth')?.name,
      options: { revise: q.revision === 'true', createMissing: q.createMissing === 'true', onlyMill: millScope },
      afterWrite: c.get('afterWrite'),
    });
    refuseForeignMill(report);
    const item = report.items[0];
    if (report.status === 'duplicate') return c.json(report, 200);
    if (item?.status === 'conflict') {
      throw new ApiError(409, 'certificate_conflict', item.problems[0]?.message ?? 'a different certificate is on file', {
        importId: report.importId,
        heatId: item.heatId,
        revision: item.revision,
        differences: item.differences,
      });
    }
    if (report.status === 'rejected') {
      throw new ApiError(422, 'invalid_certificate', 'The certificate was not stored; see details for every problem.', {
        importId: report.importId,
        problems: [...report.problems, ...report.items.flatMap((i) => i.problems)],
      });
    }
    return c.json(report, item?.status === 'unchanged' ? 200 : 201);
  });

  app.openAPIRegistry.registerPath({
    method: 'post',
    path: '/api/v1/imports',
    tags: ['ingest'],
    summary: 'Import a file of certificates and end-quench tests (CSV, XLSX or JSON)',
    description:
      'Send the file as the raw body (format from the format query, the file name or the content type) or as multipart/form-data with a "file" part and an optional "layout" part (a mill layout JSON). By default any invalid row rejects the whole file and nothing is written but the archived document; acceptValid=true writes the valid rows. dryRun=true only validates: the dryRun.message of the report says whether an import would write anything. A table without a layout has its headers recognised (heat, heat no., charge, melt; C %, Mn %; J1.5, J 1,5 mm, 1.5 mm, J1 ... J16; docs/import-format.md); the mapping of the report says which column became what, what was ignored and what is missing, and mapping.layout is the same as a mill layout that can be saved and sent again. Role: mill (own mill only), engineer, admin.',
    request: {
      query: z.object({
        format: z.enum(['csv', 'xlsx', 'json']).optional(),
        filename: z.string().optional(),
        dryRun: z.enum(['true', 'false']).optional(),
        acceptValid: z.enum(['true', 'false']).optional(),
        createMissing: z.enum(['true', 'false']).optional(),
        revise: z.enum(['true', 'false']).optional(),
        mill: z.string().optional().openapi({ description: 'A table without a layout and without a mill column: the mill code (a mill token: its own mill).' }),
        distanceUnit: z.enum(['mm', 'sixteenths']).optional().openapi({ description: 'A table without a layout: the unit of whole-number J headers (J3, J5 ...) when their set does not say it.' }),
      }),
    },
    responses: {
      201: { description: 'Written (accepted or partially accepted)', content: { 'application/json': { schema: reportSchema } } },
      200: { description: 'Validated only (dry run), or a duplicate of an earlier import (for a mill token: of an import of its own mill)', content: { 'application/json': { schema: reportSchema } } },
      403: { description: 'The document holds data of a mill the caller may not send for (refused whole)', content: { 'application/json': { schema: errorBodySchema } } },
      413: { description: 'The body, or an XLSX workbook, is past a size limit (the report names it in limit)', content: { 'application/json': { schema: reportSchema } } },
      422: { description: 'Rejected: the report names every problem by row and column, or the XLSX work limit passed (limit)', content: { 'application/json': { schema: reportSchema } } },
    },
  });
  app.post('/api/v1/imports', async (c) => {
    const q = z
      .object({
        format: z.string().optional(),
        filename: z.string().optional(),
        dryRun: flag,
        acceptValid: flag,
        createMissing: flag,
        revise: flag,
        mill: z.string().trim().min(1).optional(),
        distanceUnit: z.enum(['mm', 'sixteenths']).optional(),
      })
      .parse(c.req.query());
    let bytes: Uint8Array;
    let filename = q.filename;
    let layoutText: string | undefined;
    const contentType = c.req.header('content-type');
    if (contentType?.startsWith('multipart/form-data')) {
      const form = await c.req.parseBody();
      const file = form.file;
      if (!(file instanceof File)) throw new ApiError(400, 'missing_file', 'The form needs a "file" part holding the document.');
      bytes = new Uint8Array(await file.arrayBuffer());
      filename ??= file.name;
      const layout = form.layout;
      if (layout instanceof File) layoutText = await layout.text();
      else if (typeof layout === 'string' && layout.trim()) layoutText = layout;
    } else {
      bytes = new Uint8Array(await c.req.arrayBuffer());
    }
    if (bytes.byteLength === 0) throw new ApiError(400, 'empty_file', 'The document is empty.');
    const format = formatOf(contentType, filename, q.format);
    let layout;
    if (layoutText !== undefined) {
      try {
        layout = loadMillLayout(JSON.parse(layoutText));
      } catch (error) {
        throw new ApiError(400, 'invalid_layout', `The mill layout is not usable: ${(error as Error).message}`);
      }
    }
    const report = await runImport(db, {
      bytes,
      format,
      filename,
      layout,
      millCode: q.mill ?? c.get('auth')?.millScope,
      distanceUnit: q.distanceUnit,
      createdBy: c.get('auth')?.name,
      options: { dryRun: q.dryRun, acceptValid: q.acceptValid, createMissing: q.createMissing, revise: q.revise, onlyMill: c.get('auth')?.millScope },
      afterWrite: c.get('afterWrite'),
    });
    refuseForeignMill(report);
    return c.json(report, statusOfReport(report));
  });

  app.openapi(
    createRoute({
      method: 'get',
      path: '/api/v1/imports/{id}',
      tags: ['ingest'],
      summary: 'An archived import: its outcome per row, and the document itself on request',
      description: 'download=true returns the document exactly as uploaded. Role: viewer.',
      request: {
        params: z.object({ id: z.coerce.number().int().positive() }),
        query: z.object({ download: z.enum(['true', 'false']).optional() }),
      },
      responses: {
        200: { description: 'The import', content: { 'application/json': { schema: z.record(z.string(), z.unknown()) } } },
        404: { description: 'No such import', content: { 'application/json': { schema: errorBodySchema } } },
      },
    }),
    async (c) => {
      const { id } = c.req.valid('param');
      const [row] = await db.select().from(imports).where(eq(imports.id, id));
      if (!row) throw new ApiError(404, 'not_found', `import ${id} is not on file`);
      if (c.req.valid('query').download === 'true') {
        const type = row.format === 'json' ? 'application/json' : row.format === 'csv' ? 'text/csv' : 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';
        // RFC 6266 / RFC 5987: an ASCII fallback name and the real one, UTF-8 encoded.
        const name = row.filename ?? `import-${id}.${row.format}`;
        const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '');
        return new Response(Buffer.from(row.content), {
          headers: { 'content-type': type, 'content-disposition': `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}` },
        }) as never;
      }
      const { content: _content, ...rest } = row;
      return c.json({ ...rest, createdAt: row.createdAt.toISOString(), finishedAt: row.finishedAt?.toISOString() ?? null }, 200);
    },
  );
}
