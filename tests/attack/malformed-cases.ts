/**
 * The malformed requests, as lists a reader can extend: cases × targets. malformed.test.ts sends
 * each one as a lab manager (the role that gets furthest) and expects a 4xx — the JSON error under
 * /api/, a page-level 4xx elsewhere — no 500, and no change to any stored row.
 *
 * To add a case: append to the list it belongs to. To add a target: append to jsonTargets (a JSON
 * write), queryTargets (a GET with filters); id and form cases reach every route of app/routes.ts by
 * themselves.
 */
import type { AttackLab } from "./fixtures";
import type { Method } from "./harness";

const MB = 1024 * 1024;
const deep = (levels: number) => "[".repeat(levels) + "]".repeat(levels);
const today = () => new Date().toISOString().slice(0, 10);

/** A JSON write with a body that is accepted as it stands; cases break one thing in it. */
export interface JsonTarget {
  name: string;
  method: Method;
  url: (lab: AttackLab) => string;
  valid: (lab: AttackLab) => Record<string, unknown>;
  /** Fields that take a number, text, a date and time, or a day (YYYY-MM-DD). */
  numbers: string[];
  texts: string[];
  dates: string[];
  days?: string[];
  /** Fields the body cannot leave out. */
  required: string[];
}

export const jsonTargets: JsonTarget[] = [
  {
    name: "log a run",
    method: "POST",
    url: () => "/api/v1/runs",
    valid: (lab) => ({
      tableId: lab.tableA.id,
      tankId: lab.tank.id,
      cameraId: lab.camera.id,
      setRateRpm: 10,
      direction: "ccw",
      waterDepthCm: 10,
      waterTemperatureC: 20,
      cameraMode: "rotating",
      frameRateFps: 30,
      tracer: "float",
      purpose: "Inertial circle demonstration",
      rateReachedAt: new Date(Date.now() - 3_600_000).toISOString(),
    }),
    numbers: ["tableId", "setRateRpm", "waterDepthCm", "frameRateFps"],
    texts: ["purpose", "direction"],
    dates: ["rateReachedAt"],
    required: ["tableId", "purpose"],
  },
  {
    name: "change a run",
    method: "PATCH",
    url: (lab) => `/api/v1/runs/${lab.run.id}`,
    valid: () => ({ waterTemperatureC: 21, notes: "Thermometer re-read" }),
    numbers: ["waterTemperatureC"],
    texts: ["notes"],
    dates: [],
    required: [],
  },
  {
    name: "request a booking",
    method: "POST",
    url: () => "/api/v1/bookings",
    valid: (lab) => ({
      equipmentId: lab.tank2.id,
      start: new Date(Date.now() + 40 * 86_400_000).toISOString(),
      end: new Date(Date.now() + 40 * 86_400_000 + 3_600_000).toISOString(),
      purpose: "Ekman layer class",
    }),
    numbers: ["equipmentId"],
    texts: ["purpose"],
    dates: ["start", "end"],
    required: ["equipmentId", "start"],
  },
  {
    name: "decline a booking",
    method: "POST",
    url: (lab) => `/api/v1/bookings/${lab.bookings.technician.id}/decline`,
    valid: () => ({ reason: "The table is being serviced that week." }),
    numbers: [],
    texts: ["reason"],
    dates: [],
    required: ["reason"],
  },
  {
    name: "record a calibration",
    method: "POST",
    url: () => "/api/v1/calibrations",
    valid: (lab) => ({
      kind: "scale",
      equipmentId: lab.camera.id,
      performedOn: today(),
      knownLengthMm: 300,
      knownLengthUncertaintyMm: 0.5,
      lengthPx: 600,
      lengthUncertaintyPx: 1,
    }),
    numbers: ["equipmentId", "knownLengthMm", "lengthPx"],
    texts: ["notes"],
    dates: [],
    days: ["performedOn", "dueOn"],
    required: ["kind", "performedOn"],
  },
  {
    name: "replace a calibration",
    method: "PUT",
    url: (lab) => `/api/v1/calibrations/${lab.calibration.id}`,
    valid: (lab) => ({
      kind: "scale",
      equipmentId: lab.camera.id,
      performedOn: today(),
      knownLengthMm: 310,
      knownLengthUncertaintyMm: 0.5,
      lengthPx: 620,
      lengthUncertaintyPx: 1,
    }),
    numbers: ["equipmentId", "knownLengthMm"],
    texts: ["notes"],
    dates: [],
    days: ["dueOn"],
    required: ["equipmentId"],
  },
];

/** What is wrong with the body as a whole: raw text and its Content-Type. */
export const bodyCases: { name: string; type: string | null; body: (valid: Record<string, unknown>) => string | null }[] = [
  { name: "no body and no Content-Type", type: null, body: () => null },
  { name: "an empty JSON body", type: "application/json", body: () => "" },
  { name: "broken JSON", type: "application/json", body: () => '{"purpose": "Dye run",' },
  { name: "JSON null", type: "application/json", body: () => "null" },
  { name: "a JSON array", type: "application/json", body: (v) => JSON.stringify([v]) },
  { name: "a JSON string", type: "application/json", body: () => '"tableId=1"' },
  { name: "a JSON number", type: "application/json", body: () => "42" },
  { name: "10 000 levels of nesting", type: "application/json", body: (v) => `{${JSON.stringify(v).slice(1, -1)},"nested":${deep(10_000)}}` },
  { name: "a NUL byte inside the JSON text", type: "application/json", body: (v) => JSON.stringify(v).replace("{", "{\u0000") },
  { name: "valid JSON sent as text/plain", type: "text/plain", body: (v) => JSON.stringify(v) },
  {
    name: "a form body to a JSON route",
    type: "application/x-www-form-urlencoded",
    body: (v) => new URLSearchParams(Object.entries(v).map(([k, x]) => [k, String(x)])).toString(),
  },
  { name: "an extra field", type: "application/json", body: (v) => JSON.stringify({ ...v, role: "lab_manager" }) },
];

/** Values a number field must refuse (JSON text, so 1e309 arrives as the number Infinity). */
export const numberCases: { name: string; json: string }[] = [
  { name: "true", json: "true" },
  { name: "false", json: "false" },
  { name: "an empty array", json: "[]" },
  { name: "an array with a number", json: "[1]" },
  { name: "an object", json: '{"value":1}' },
  { name: "text", json: '"abc"' },
  { name: "hexadecimal text", json: '"0x10"' },
  { name: "1e309 (Infinity)", json: "1e309" },
  { name: "text 1e309", json: '"1e309"' },
  { name: "-1", json: "-1" },
  // Past PostgreSQL's 32-bit integer columns (2^31).
  { name: "2147483648", json: "2147483648" },
];

/** Values a text field must refuse. */
export const textCases: { name: string; json: string }[] = [
  { name: "a number", json: "123" },
  { name: "true", json: "true" },
  { name: "an array", json: '["a"]' },
  { name: "an object", json: '{"text":"a"}' },
  { name: "1 MB of text", json: JSON.stringify("x".repeat(MB)) },
  // PostgreSQL refuses NUL in text; SQLite would cut the text there. Neither may see it.
  { name: "a NUL character inside the text", json: '"Dye run\\u0000 in tank A"' },
];

/** Values a date (or date and time) field must refuse. */
export const dateCases: { name: string; json: string }[] = [
  { name: "year 9999", json: '"9999-06-01T10:00:00Z"' },
  { name: "year 0", json: '"0000-06-01T10:00:00Z"' },
  { name: "30 February", json: '"2026-02-30T10:00:00Z"' },
  { name: "true", json: "true" },
  { name: "a number", json: "1767225600000" },
  { name: "text", json: '"next Tuesday"' },
];

/** Values a day field (YYYY-MM-DD) must refuse. */
export const dayCases: { name: string; json: string }[] = [
  { name: "year 9999", json: '"9999-06-01"' },
  { name: "year 0", json: '"0000-06-01"' },
  { name: "30 February", json: '"2026-02-30"' },
  { name: "31 April", json: '"2026-04-31"' },
  { name: "true", json: "true" },
  { name: "a number", json: "20260301" },
];

/** Ids that name nothing: every route with a parameter gets each of them. */
export const badIds = ["abc", "1e309", "-1", "0x10", "1.5", "0", "99999999999999999999", "2147483648", "999999999999999", "\u0000", "1 OR 1=1", "Infinity"];

/** GETs with filters: each query must be refused. */
export const queryTargets: { name: string; api: boolean; path: string; queries: string[] }[] = [
  {
    name: "runs list (API)",
    api: true,
    path: "/api/v1/runs",
    queries: [
      "q=%00",
      "q=a%00b",
      `q=${"x".repeat(MB)}`,
      "page=abc",
      "page=-1",
      "pageSize=1e309",
      "from=2026-02-30",
      "to=0000-00-00",
      "sort=%00",
      "table=true",
      "table=0x10",
      "colour=red",
    ],
  },
  { name: "runs table rows", api: false, path: "/runs/rows", queries: ["q=%00", "page=abc", "from=2026-02-30", "table=[1]"] },
  { name: "runs page", api: false, path: "/runs", queries: ["q=%00", "pageSize=1e309", "technician=abc"] },
  {
    name: "bookings (API)",
    api: true,
    path: "/api/v1/bookings",
    queries: ["equipmentId=abc", "equipmentId=true", "equipmentId=-1", "state=%00", "from=not-a-date", "to=%00"],
  },
  { name: "equipment (API)", api: true, path: "/api/v1/equipment", queries: ["kind=%00", "kind=table%00"] },
  {
    name: "calibrations (API)",
    api: true,
    path: "/api/v1/calibrations",
    queries: ["equipmentId=abc", "equipmentId=0x10", "equipmentId=%00", "kind=%00", "standing=past", "q=%00"],
  },
];

/** Form bodies every page action must refuse (they cannot be read, or are not forms). */
export const formCases: { name: string; type: string | null; body: string | null }[] = [
  { name: "no body and no Content-Type", type: null, body: null },
  { name: "JSON instead of a form", type: "application/json", body: '{"intent":"approve"}' },
  { name: "text/plain", type: "text/plain", body: "intent=approve" },
  {
    name: "multipart with a boundary that never comes",
    type: "multipart/form-data; boundary=tankside",
    body: '--nope\r\nContent-Disposition: form-data; name="intent"\r\n\r\napprove',
  },
  { name: "a 1 MB field of NULs", type: "application/x-www-form-urlencoded", body: `intent=${"%00".repeat(MB / 3)}` },
];

/** Page actions that read no form and rightly act on any POST (signing out needs nothing but the session): a redirect is their answer. */
export const actsWithoutInput = new Set(["routes/auth/sign-out"]);
/** API actions that take no body: a POST is the whole request, so "no body" is not malformed for them. */
export const apiActsWithoutBody = new Set([
  "api-booking-approve",
  "api-booking-cancel",
  "routes/api/calibration-sign-off",
  "routes/api/run-tracking",
  "routes/api/not-found",
]);
