import type { OpenAPIRegistry } from "@asteasolutions/zod-to-openapi";
import { z } from "../zod";
import { badBody, error, ids, json, notJson, operation, routeSchema } from "./helpers";
import { calibrationAttachmentSchema, calibrationListSchema, calibrationSchema } from "../responses/calibrations";
import { calibrationApiSchema, calibrationFilterSchema } from "~/lib/validation/calibrations";
import { capabilityRoles, roleLabels, roles, type Capability, type Role } from "~/lib/roles";

const tags = ["Calibrations"];

/** Who may call an operation, from the one capability table; `x-roles` lets scripts (and tests) read it. */
function whoMay(capability: Capability) {
  const allowed = capabilityRoles[capability] as readonly Role[];
  const names = allowed.map((r) => roleLabels[r].toLowerCase());
  const text =
    allowed.length === roles.length ? "every role" : names.length > 1 ? `${names.slice(0, -1).join(", ")} or ${names.at(-1)}` : (names[0] ?? "nobody");
  return { "x-roles": [...allowed], description: `Open to ${text}.`, forbidden: error(`Not for your role: only ${text} (forbidden).`) };
}

const noRecord = error("No such record (not_found).");
const refusedNow = error(
  "Well-formed, but not possible for this record or item: wrong_equipment, invalid_date (in the future), invalid_due_date, invalid_meter, invalid_calibration (the readings cannot be fitted), fixed_fields (kind or equipment changed).",
);

export function registerCalibrationPaths(registry: OpenAPIRegistry) {
  const input = registry.register("CalibrationInput", routeSchema(calibrationApiSchema));
  const read = whoMay("read_calibrations");
  const record = whoMay("record_calibration");
  const signOff = whoMay("sign_off_calibration");
  const strip = (who: ReturnType<typeof whoMay>) => ({ "x-roles": who["x-roles"], description: who.description });
  const body = { body: { required: true, content: { "application/json": { schema: input } } } };

  operation(registry, {
    method: "get",
    path: "/api/v1/calibrations",
    operationId: "listCalibrations",
    tags,
    summary: "Calibration records, newest first; filtered as the calibrations page filters",
    ...strip(read),
    request: { query: routeSchema(calibrationFilterSchema) },
    responses: {
      200: json(calibrationListSchema, "Newest first"),
      400: error("equipmentId is not an id, or an unknown kind or standing, or search text that is too long (invalid_filter, with field)."),
    },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/calibrations",
    operationId: "recordCalibration",
    tags,
    summary: "Record a calibration; it waits for a lab manager's sign-off",
    ...strip(record),
    request: body,
    responses: {
      201: json(calibrationSchema, "Recorded"),
      400: badBody(),
      403: record.forbidden,
      404: error("Unknown equipment or meter (not_found)."),
      415: notJson,
      422: refusedNow,
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/calibrations/{id}",
    operationId: "getCalibration",
    tags,
    summary: "One record",
    ...strip(read),
    request: { params: ids("id") },
    responses: { 200: json(calibrationSchema, "The record"), 404: noRecord },
  });
  // PATCH is taken as PUT (the whole record is sent and checked), so clients that only PATCH can edit too.
  for (const [method, operationId, summary] of [
    ["put", "replaceCalibration", "Replace a record that is not signed off"],
    ["patch", "updateCalibration", "The same as PUT: send the whole record"],
  ] as const) {
    operation(registry, {
      method,
      path: "/api/v1/calibrations/{id}",
      operationId,
      tags,
      summary,
      ...strip(record),
      request: { params: ids("id"), ...body },
      responses: {
        200: json(calibrationSchema, "The record after the change"),
        400: badBody(),
        403: record.forbidden,
        404: noRecord,
        409: error("calibration_signed: a signed record never changes."),
        415: notJson,
        422: refusedNow,
      },
    });
  }
  operation(registry, {
    method: "post",
    path: "/api/v1/calibrations/{id}/sign-off",
    operationId: "signOffCalibration",
    tags,
    summary: "Sign a record off (lab manager)",
    ...strip(signOff),
    request: { params: ids("id") },
    responses: {
      200: json(calibrationSchema, "Signed off"),
      403: error("Not for your role (forbidden), or second_person_required: the lab requires a second person to sign off, and you performed this calibration."),
      404: noRecord,
      409: error("Already signed off (calibration_signed)."),
    },
  });
  operation(registry, {
    method: "post",
    path: "/api/v1/calibrations/{id}/attachments",
    operationId: "attachToCalibration",
    tags,
    summary: "Attach a photo or PDF (checked by its content) to a record not signed off",
    ...strip(record),
    request: {
      params: ids("id"),
      body: {
        required: true,
        content: { "multipart/form-data": { schema: z.strictObject({ file: z.string().openapi({ format: "binary", description: "The photo or PDF." }) }) } },
      },
    },
    responses: {
      201: json(calibrationAttachmentSchema, "Stored"),
      400: error("No file field, or the body cannot be read as multipart/form-data (invalid_upload)."),
      403: record.forbidden,
      404: noRecord,
      409: error("The record is signed off (calibration_signed)."),
      413: error("Over 20 MB (file_too_large)."),
      422: error("empty_file, or unsupported_attachment: not an image or a PDF by its content."),
      503: error("The file store cannot be reached (storage_unavailable)."),
    },
  });
  operation(registry, {
    method: "get",
    path: "/api/v1/calibrations/{id}/attachments/{attachmentId}",
    operationId: "getCalibrationAttachment",
    tags,
    summary: "Download an attachment",
    ...strip(read),
    request: { params: ids("id", "attachmentId") },
    responses: {
      200: { description: "The file, as its content type says", content: { "application/octet-stream": { schema: z.string().openapi({ format: "binary" }) } } },
      404: error("No such attachment (not_found)."),
      503: error("The file store cannot be reached (storage_unavailable)."),
    },
  });
  operation(registry, {
    method: "delete",
    path: "/api/v1/calibrations/{id}/attachments/{attachmentId}",
    operationId: "removeCalibrationAttachment",
    tags,
    summary: "Remove an attachment from a record not signed off; its file is deleted after the change is stored",
    ...strip(record),
    request: { params: ids("id", "attachmentId") },
    responses: {
      200: json(calibrationSchema, "The record without the file"),
      403: record.forbidden,
      404: error("No such record or attachment (not_found)."),
      409: error("The record is signed off (calibration_signed): its files stay as they were signed."),
    },
  });
}
