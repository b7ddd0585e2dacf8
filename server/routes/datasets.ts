/**
 * Datasets: uploads of brain tables and participant sheets, previews,
 * confirmation into immutable versions.
 *
 * POST /api/studies/:studyId/datasets                      multipart: kind (brain | participants), file
 *                                                          (.csv, .tsv, or gzip-compressed .csv.gz, .tsv.gz),
 *                                                          optional idColumn, seSuffix, layout, sessionColumn ("none" = no session column)
 *                                                          → 201 preview { id, status: "preview", columns, rows, problems, identifierColumns, … }
 * GET  /api/studies/:studyId/datasets                      → versions and live previews, newest first
 * GET  /api/studies/:studyId/datasets/:datasetId?offset&limit
 *                                                          → a version (metadata and a page of rows) or a preview
 * POST /api/studies/:studyId/datasets/:datasetId/confirm   { types?, dropColumns?, identifierReasons?, idColumn?, seSuffix?, layout?, sessionColumn? }
 *                                                          → 201 the stored version
 *
 * The file is written to disk as it arrives (server/http/upload-storage.ts)
 * and read in the intake's worker thread. Unreadable files (a damaged gzip
 * file too) answer 400, files over the limits (MAX_UPLOAD_MB, counted on
 * the bytes received; MAX_UPLOAD_COLUMNS) 413, content refused
 * 422 — each with every problem (file, row, column) in `details.problems`;
 * nothing is stored then. Rows are left out (null or []) for roles that may
 * not read participant-level rows (Viewers of a restricted study).
 */
import { Router, type RequestHandler } from "express";
import multer from "multer";
import { z } from "zod";
import { authorize, authorizedStudy, roleMay } from "../auth/permissions";
import { signedInUser } from "../auth/session";
import { HttpError } from "../http/errors";
import { idSchema, noQuery, parsed, validate } from "../http/validate";
import { join } from "node:path";
import {
  clearStaleUploads,
  discardUnlessKept,
  keepUpload,
  uploadStorage,
} from "../http/upload-storage";
import { IntakeError, NO_FILE_NAME, cleanFileName, problem } from "../intake";
import { confirmUpload, getDataset, listDatasets, previewUpload } from "../services/datasets";
import type { UploadOptions } from "../../contract/views/datasets";
import type { PreviewStore } from "../services/preview-store";
import type { RouteDeps } from "./deps";
import { studyParams } from "./studies";

const columnName = z
  .string()
  .trim()
  .min(1, { error: "must not be empty" })
  .max(500, { error: "must be at most 500 characters" });
const optionalField = (schema: z.ZodType) =>
  z.preprocess((v) => (v === "" ? undefined : v), schema.optional());

const uploadBody = z.strictObject({
  kind: z.enum(["brain", "participants"], { error: 'must be "brain" or "participants"' }),
  idColumn: optionalField(columnName),
  seSuffix: optionalField(z.string().min(1).max(50)),
  layout: optionalField(z.enum(["wide", "long"], { error: 'must be "wide" or "long"' })),
  sessionColumn: optionalField(columnName),
});
const upload = { params: studyParams, query: noQuery, body: uploadBody };
const list = { params: studyParams, query: noQuery };
const datasetParams = z.strictObject({ studyId: idSchema, datasetId: idSchema });
const read = {
  params: datasetParams,
  query: z.strictObject({
    offset: z.coerce.number().int().min(0).default(0),
    limit: z.coerce.number().int().min(1).max(1000).default(100),
  }),
};
const confirm = {
  params: datasetParams,
  query: noQuery,
  body: z.strictObject({
    types: z
      .record(
        columnName,
        z.enum(["number", "category"], { error: 'must be "number" or "category"' }),
      )
      .optional(),
    dropColumns: z.array(columnName).max(20_000).optional(),
    identifierReasons: z
      .record(columnName, z.string().trim().min(1, { error: "give the reason" }).max(2000))
      .optional(),
    idColumn: columnName.optional(),
    seSuffix: z.string().min(1).max(50).optional(),
    layout: z.enum(["wide", "long"]).optional(),
    sessionColumn: columnName.nullable().optional(),
  }),
};

function noFileName(): HttpError {
  return new HttpError(400, "validation_failed", `body.file: ${NO_FILE_NAME}`, [
    { field: "body.file", message: NO_FILE_NAME },
  ]);
}

/** The file's size limit in words, naming the setting that raises it. */
export function uploadLimitText(maxBytes: number): string {
  const mb = maxBytes / (1024 * 1024);
  return `the limit of ${Number.isInteger(mb) ? mb : mb.toFixed(2)} MB (counted as received, compressed or not); a server administrator can raise it with the MAX_UPLOAD_MB setting`;
}

/**
 * multer writing the file to the uploads folder, with the byte limit
 * (MAX_UPLOAD_MB); its errors answer with the envelope (413 too large, 400
 * otherwise). The file is removed once the answer has gone out unless the
 * preview store took it.
 */
function receiveFile(dir: string, maxBytes: number): RequestHandler {
  const single = multer({
    storage: uploadStorage(dir),
    limits: { fileSize: maxBytes, files: 1, fields: 10, fieldSize: 10_000, parts: 12 },
    // Browsers send file names as UTF-8 (multer's default reads them as Latin-1).
    defParamCharset: "utf8",
    // Keep the name as sent ("." and ".." too): cleanFileName takes its last part and refuses what is no name.
    preservePath: true,
  } as multer.Options).single("file");
  return (req, res, next) => {
    discardUnlessKept(req, res);
    single(req, res, (error: unknown) => {
      if (!error) {
        // A file part sent without a name arrives as a text field.
        if (!req.file && typeof (req.body as { file?: unknown } | undefined)?.file === "string")
          return next(noFileName());
        return next();
      }
      if (error instanceof multer.MulterError) {
        if (error.code === "LIMIT_FILE_SIZE") {
          const name =
            cleanFileName((error as { filename?: string }).filename ?? "") ?? "the upload";
          return next(
            new IntakeError(413, [
              problem(name, "too_large", `the file is larger than ${uploadLimitText(maxBytes)}`),
            ]),
          );
        }
        const field = error.field ? ` (field "${error.field}")` : "";
        return next(
          new HttpError(
            400,
            "bad_upload",
            `The upload is not as expected: ${error.message}${field}. Send the fields kind and file.`,
          ),
        );
      }
      next(
        new HttpError(
          400,
          "bad_upload",
          "The upload could not be read as multipart form data with the fields kind and file.",
        ),
      );
    });
  };
}

export function datasetRoutes(deps: RouteDeps, store: PreviewStore): Router {
  const router = Router();
  // Preview ids prove they were issued here, so one from before a restart is told "expired" (preview-store.ts).
  store.signIdsWith(deps.config.secrets.authSecret);
  // Uploaded files wait here; a stopped process's are removed once older than a preview lives.
  const uploads = join(deps.config.dataDir, "uploads");
  clearStaleUploads(uploads, store.ttlMs);
  const { maxBytes, maxColumns } = deps.config.uploads;

  router.post(
    "/studies/:studyId/datasets",
    authorize("data.upload"),
    receiveFile(uploads, maxBytes),
    validate(upload),
    async (req, res) => {
      const { study } = authorizedStudy(res);
      const file = req.file;
      if (!file) {
        // A part whose file name is empty never reaches this handler either; say so.
        const message = `no file arrived: attach the file to upload; if you did, ${NO_FILE_NAME}`;
        throw new HttpError(400, "validation_failed", `body.file: ${message}`, [
          { field: "body.file", message },
        ]);
      }
      const fileName = cleanFileName(file.originalname);
      if (fileName === null) throw noFileName();
      const body = parsed(res, upload).body;
      const user = signedInUser(res);
      const options: UploadOptions = {
        ...(body.idColumn !== undefined ? { idColumn: body.idColumn as string } : {}),
        ...(body.seSuffix !== undefined ? { seSuffix: body.seSuffix as string } : {}),
        ...(body.layout !== undefined ? { layout: body.layout as "wide" | "long" } : {}),
        ...(body.sessionColumn !== undefined
          ? { sessionColumn: body.sessionColumn === "none" ? null : (body.sessionColumn as string) }
          : {}),
      };
      // From here the preview store owns the file (previewUpload removes it when the upload is refused).
      keepUpload(file);
      const view = await previewUpload(store, {
        studyId: study.id,
        kind: body.kind,
        fileName,
        upload: { path: file.path },
        byteSize: file.size,
        limits: { maxBytes, maxColumns },
        options,
        uploader: { id: user.id, name: user.name, email: user.email },
        now: deps.clock(),
      });
      res.status(201).json(view);
    },
  );

  router.get(
    "/studies/:studyId/datasets",
    authorize("data.read"),
    validate(list),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      res.json(await listDatasets(deps.db, store, study.id, deps.clock()));
    },
  );

  router.get(
    "/studies/:studyId/datasets/:datasetId",
    authorize("data.read"),
    validate(read),
    async (_req, res) => {
      const { study, role } = authorizedStudy(res);
      const { params, query } = parsed(res, read);
      const withRows = roleMay("participants.read", role, { restricted: study.restricted });
      res.json(
        await getDataset(
          deps.db,
          store,
          study.id,
          params.datasetId,
          { ...query, withRows },
          deps.clock(),
        ),
      );
    },
  );

  router.post(
    "/studies/:studyId/datasets/:datasetId/confirm",
    authorize("data.upload"),
    validate(confirm),
    async (_req, res) => {
      const { study } = authorizedStudy(res);
      const { params, body } = parsed(res, confirm);
      const user = signedInUser(res);
      const view = await confirmUpload(deps.db, store, {
        studyId: study.id,
        datasetId: params.datasetId,
        actor: { id: user.id, name: user.name, email: user.email },
        confirmation: body,
        now: deps.clock(),
      });
      res.status(201).json(view);
    },
  );

  return router;
}
