/**
 * The bookings (and calibration records) part of Tankside's OpenAPI 3.1 document, as a fragment
 * to merge into GET /api/v1/openapi.json: `paths` plus the `components.schemas` they refer to.
 */
import { capabilityRoles, roleLabels, roles, type Capability, type Role } from "~/lib/roles";

const json = (schema: object) => ({ "application/json": { schema } });
const ref = (name: string) => ({ $ref: `#/components/schemas/${name}` });
const error = (description: string) => ({ description, content: json(ref("Error")) });
/** The roles a capability names, in words: "every role", "technician or lab manager". */
const rolesText = (capability: Capability) => {
  const allowed = capabilityRoles[capability] as readonly Role[];
  const names = allowed.map((r) => roleLabels[r].toLowerCase());
  return allowed.length === roles.length ? "every role" : names.length > 1 ? `${names.slice(0, -1).join(", ")} or ${names.at(-1)}` : names[0]!;
};
/** Who may call an operation, from the one capability table; `x-roles` lets scripts (and tests) read it. */
const whoMay = (capability: Capability) => ({ "x-roles": capabilityRoles[capability], description: `Open to ${rolesText(capability)}.` });
const notForRole = (capability: Capability) => error(`Not for your role: only ${rolesText(capability)}.`);
const idParam = { name: "id", in: "path", required: true, schema: { type: "integer", minimum: 1 } };

export const bookingSchemas = {
  Error: {
    type: "object",
    required: ["error"],
    properties: {
      error: {
        type: "object",
        required: ["code", "message"],
        properties: { code: { type: "string", examples: ["booking_conflict"] }, message: { type: "string" }, field: { type: "string" } },
      },
    },
  },
  BookingRequest: {
    type: "object",
    required: ["equipmentId", "start", "end", "purpose"],
    properties: {
      equipmentId: { type: "integer", minimum: 1 },
      start: { type: "string", format: "date-time", description: "ISO 8601 with a zone (Z or an offset)." },
      end: { type: "string", format: "date-time", description: "After start; at most 14 days later." },
      purpose: { type: "string", minLength: 3, maxLength: 300 },
      plannedRateRpm: { type: "number", exclusiveMinimum: 0, maximum: 200 },
      plannedDepthCm: { type: "number", exclusiveMinimum: 0, maximum: 200 },
      addSpinUpLead: { type: "boolean", description: "Start earlier by spinUpTimesToWait × H/√(νΩ); needs the planned rate and depth." },
    },
  },
  Booking: {
    type: "object",
    required: ["id", "equipmentId", "state", "start", "end", "purpose", "requesterId"],
    properties: {
      id: { type: "integer" },
      equipmentId: { type: "integer" },
      equipmentName: { type: "string" },
      equipmentKind: { type: ["string", "null"], enum: ["table", "tank", "camera", "rate_meter", null] },
      state: { type: "string", enum: ["requested", "approved", "declined", "cancelled"] },
      start: { type: "string", format: "date-time" },
      end: { type: "string", format: "date-time" },
      purpose: { type: "string" },
      plannedRateRpm: { type: ["number", "null"] },
      plannedDepthCm: { type: ["number", "null"] },
      spinUpLeadMinutes: { type: ["number", "null"] },
      requesterId: { type: "integer" },
      requesterName: { type: "string" },
      decidedById: { type: ["integer", "null"] },
      decidedByName: { type: ["string", "null"] },
      decidedAt: { type: ["string", "null"], format: "date-time" },
      declineReason: { type: ["string", "null"] },
      cancelledById: { type: ["integer", "null"] },
      cancelledAt: { type: ["string", "null"], format: "date-time" },
      createdAt: { type: "string", format: "date-time" },
      mail: {
        type: "object",
        description: "Present on changes: whether the e-mail to the people concerned was queued in the outbox (written with the change itself); its delivery is listed at /api/v1/mail/outbox.",
        properties: { queued: { type: "boolean" }, outboxId: { type: "integer" } },
      },
    },
  },
  CalibrationInput: {
    type: "object",
    required: ["kind", "equipmentId", "performedOn"],
    description: "rate: meterId and readings (3 or more, rates > 0); scale: knownLengthMm, knownLengthUncertaintyMm, lengthPx, lengthUncertaintyPx; timing: nominalFrameRateFps, frameIntervals, frameIntervalsUncertainty, referenceElapsedS, referenceElapsedUncertaintyS.",
    properties: {
      kind: { type: "string", enum: ["rate", "scale", "timing"] },
      equipmentId: { type: "integer" },
      performedOn: { type: "string", format: "date" },
      dueOn: { type: "string", format: "date", description: "Not before performedOn; default performedOn + the lab's interval for the kind." },
      notes: { type: "string", maxLength: 4000 },
      meterId: { type: "integer" },
      readings: { type: "array", minItems: 3, items: { type: "object", required: ["setRpm", "measuredRpm"], properties: { setRpm: { type: "number", exclusiveMinimum: 0 }, measuredRpm: { type: "number", exclusiveMinimum: 0 } } } },
      knownLengthMm: { type: "number", exclusiveMinimum: 0 },
      knownLengthUncertaintyMm: { type: "number", minimum: 0 },
      lengthPx: { type: "number", exclusiveMinimum: 0 },
      lengthUncertaintyPx: { type: "number", minimum: 0 },
      nominalFrameRateFps: { type: "number", exclusiveMinimum: 0 },
      frameIntervals: { type: "number", exclusiveMinimum: 0 },
      frameIntervalsUncertainty: { type: "number", minimum: 0 },
      referenceElapsedS: { type: "number", exclusiveMinimum: 0 },
      referenceElapsedUncertaintyS: { type: "number", minimum: 0 },
    },
  },
  Calibration: {
    type: "object",
    description: "A record with its computed result and its standing now (draft, in_force, superseded, past_due).",
    properties: {
      id: { type: "integer" },
      kind: { type: "string", enum: ["rate", "scale", "timing"] },
      equipmentId: { type: "integer" },
      standing: { type: "string", enum: ["draft", "in_force", "superseded", "past_due"] },
      performedOn: { type: "string", format: "date" },
      dueOn: { type: "string", format: "date" },
      slope: { type: ["number", "null"] },
      interceptRpm: { type: ["number", "null"] },
      slopeStdError: { type: ["number", "null"] },
      interceptStdErrorRpm: { type: ["number", "null"] },
      slopeInterceptCovarianceRpm: { type: ["number", "null"] },
      residualSdRpm: { type: ["number", "null"] },
      maxDeviationPct: { type: ["number", "null"] },
      passed: { type: ["boolean", "null"] },
      scalePxPerM: { type: ["number", "null"] },
      scaleUncertaintyPxPerM: { type: ["number", "null"] },
      trueFrameRateFps: { type: ["number", "null"] },
      trueFrameRateUncertaintyFps: { type: ["number", "null"] },
      signedOffAt: { type: ["string", "null"], format: "date-time" },
      attachments: { type: "array", items: { type: "object", properties: { id: { type: "integer" }, originalName: { type: "string" }, contentType: { type: "string" }, url: { type: "string" } } } },
    },
  },
} as const;

const decision = (summary: string, body?: object) => ({
  post: {
    tags: ["Bookings"],
    summary,
    parameters: [idParam],
    ...(body ? { requestBody: { required: true, content: json(body) } } : {}),
    responses: {
      "200": { description: "The booking after the change.", content: json(ref("Booking")) },
      "400": error("Bad input (e.g. no reason)."),
      "401": error("Not signed in."),
      "403": error("Not allowed for this role or person."),
      "404": error("No such booking."),
      "409": error("booking_conflict: it would overlap an approved booking of the item; invalid_state: not in a state that allows this."),
      "422": error("equipment_unavailable (out of service) or slot_in_past."),
    },
  },
});

export const bookingPaths = {
  "/api/v1/bookings": {
    get: {
      tags: ["Bookings"],
      summary: "List bookings (any signed-in person)",
      parameters: [
        { name: "equipmentId", in: "query", schema: { type: "integer" } },
        { name: "state", in: "query", schema: { type: "string", enum: ["requested", "approved", "declined", "cancelled"] } },
        { name: "from", in: "query", description: "Bookings ending after this time.", schema: { type: "string", format: "date-time" } },
        { name: "to", in: "query", description: "Bookings starting before this time.", schema: { type: "string", format: "date-time" } },
        { name: "mine", in: "query", description: "1: only the caller's own.", schema: { type: "string", enum: ["1", "true"] } },
      ],
      responses: { "200": { description: "Soonest first.", content: json({ type: "array", items: ref("Booking") }) }, "400": error("A filter is not valid."), "401": error("Not signed in.") },
    },
    post: {
      tags: ["Bookings"],
      summary: "Request equipment time; the lab managers are e-mailed",
      requestBody: { required: true, content: json(ref("BookingRequest")) },
      responses: {
        "201": { description: "Requested.", content: json(ref("Booking")) },
        "400": error("Bad JSON or fields (invalid_input)."),
        "401": error("Not signed in."),
        "404": error("Unknown equipment."),
        "409": error("booking_conflict with an approved booking."),
        "415": error("Not JSON."),
        "422": error("invalid_slot (end before start, too long), slot_in_past, equipment_unavailable."),
      },
    },
  },
  "/api/v1/bookings/{id}": {
    get: { tags: ["Bookings"], summary: "One booking", parameters: [idParam], responses: { "200": { description: "The booking.", content: json(ref("Booking")) }, "401": error("Not signed in."), "404": error("No such booking.") } },
  },
  "/api/v1/bookings/{id}/approve": decision("Approve (lab manager); the requester is e-mailed"),
  "/api/v1/bookings/{id}/decline": decision("Decline with a reason (lab manager); the requester is e-mailed", { type: "object", required: ["reason"], properties: { reason: { type: "string", minLength: 3, maxLength: 500 } } }),
  "/api/v1/bookings/{id}/cancel": decision("Cancel (the requester or a lab manager)"),
  "/api/v1/bookings/{id}/ics": {
    get: {
      tags: ["Bookings"],
      summary: "One booking as iCalendar (RFC 5545), times in UTC",
      parameters: [idParam],
      responses: { "200": { description: "A VCALENDAR with one VEVENT.", content: { "text/calendar": { schema: { type: "string" } } } }, "401": error("Not signed in."), "404": error("No such booking.") },
    },
  },
  "/api/v1/feeds/{token}/bookings.ics": {
    get: {
      tags: ["Bookings"],
      summary: "A person's approved bookings as a subscribable iCalendar feed; the secret token in the address is the credential",
      security: [],
      parameters: [{ name: "token", in: "path", required: true, schema: { type: "string" } }],
      responses: { "200": { description: "A VCALENDAR.", content: { "text/calendar": { schema: { type: "string" } } } }, "404": error("Unknown or replaced feed address.") },
    },
  },
  "/api/v1/calibrations": {
    get: { tags: ["Calibrations"], summary: "List calibration records", ...whoMay("read_calibrations"), parameters: [{ name: "equipmentId", in: "query", schema: { type: "integer" } }], responses: { "200": { description: "Newest first.", content: json({ type: "array", items: ref("Calibration") }) }, "401": error("Not signed in.") } },
    post: {
      tags: ["Calibrations"],
      summary: "Record a calibration (technician or lab manager)",
      ...whoMay("record_calibration"),
      requestBody: { required: true, content: json(ref("CalibrationInput")) },
      responses: { "201": { description: "Recorded, awaiting sign-off.", content: json(ref("Calibration")) }, "400": error("invalid_input"), "401": error("Not signed in."), "403": notForRole("record_calibration"), "404": error("Unknown equipment."), "422": error("Wrong kind of equipment, due date before the calibration date, bad readings.") },
    },
  },
  "/api/v1/calibrations/{id}": {
    get: { tags: ["Calibrations"], summary: "One record", ...whoMay("read_calibrations"), parameters: [idParam], responses: { "200": { description: "The record.", content: json(ref("Calibration")) }, "401": error("Not signed in."), "404": error("No such record.") } },
    put: {
      tags: ["Calibrations"],
      summary: "Replace a record that is not signed off",
      ...whoMay("record_calibration"),
      parameters: [idParam],
      requestBody: { required: true, content: json(ref("CalibrationInput")) },
      responses: { "200": { description: "Changed.", content: json(ref("Calibration")) }, "403": notForRole("record_calibration"), "409": error("calibration_signed: a signed record never changes."), "422": error("Bad input.") },
    },
  },
  "/api/v1/calibrations/{id}/sign-off": {
    post: { tags: ["Calibrations"], summary: "Sign off (lab manager)", ...whoMay("sign_off_calibration"), parameters: [idParam], responses: { "200": { description: "Signed.", content: json(ref("Calibration")) }, "403": notForRole("sign_off_calibration"), "409": error("Already signed.") } },
  },
  "/api/v1/calibrations/{id}/attachments": {
    post: {
      tags: ["Calibrations"],
      summary: "Attach a photo or PDF (checked by content) to an unsigned record",
      ...whoMay("record_calibration"),
      parameters: [idParam],
      requestBody: { required: true, content: { "multipart/form-data": { schema: { type: "object", required: ["file"], properties: { file: { type: "string", format: "binary" } } } } } },
      responses: { "201": { description: "Stored." }, "403": notForRole("record_calibration"), "409": error("The record is signed."), "413": error("Over 20 MB."), "422": error("unsupported_attachment: not an image or a PDF.") },
    },
  },
  "/api/v1/calibrations/{id}/attachments/{attachmentId}": {
    get: { tags: ["Calibrations"], summary: "Download an attachment", ...whoMay("read_calibrations"), parameters: [idParam, { name: "attachmentId", in: "path", required: true, schema: { type: "integer" } }], responses: { "200": { description: "The file." }, "401": error("Not signed in."), "404": error("No such attachment.") } },
  },
} as const;
