/**
 * Who may use each route, written once. The access matrix (access-matrix.test.ts) calls every
 * route in app/routes.ts with every method it serves as: nobody, each role by session cookie, and
 * each role by API token, and checks the answer against this table:
 *
 *   - public              → anyone: never 401 or 403 (signing out may still lead to /sign-in)
 *   - allowed             → passes the door: not 401, not 403, not sent to /sign-in (it may still be
 *                           400/404/409 for what was sent; that is the other tests' business)
 *   - nobody, on a page   → redirect to /sign-in
 *   - nobody, on the API  → 401 with the JSON error
 *   - a role not listed   → 403
 *   - a method not listed → refused (401, 403 or 405), never served
 *
 * A bearer token counts only under /api/: on a page it is nobody. `public` routes take anyone.
 * A route added to app/routes.ts without a row here fails the matrix: add its row.
 */
import type { Role } from "~/lib/roles";
import type { Method } from "./harness";

export type Access = "public" | readonly Role[];

const signedIn = ["technician", "instructor", "lab_manager"] as const satisfies readonly Role[];
/** Technicians and lab managers: the people who log runs, record calibrations and bring frames. */
const labStaff = ["technician", "lab_manager"] as const satisfies readonly Role[];
const managers = ["lab_manager"] as const satisfies readonly Role[];

export const policy: Record<string, Partial<Record<Method, Access>>> = {
  // pages
  "routes/dashboard": { GET: signedIn },
  "routes/auth/sign-in": { GET: "public", POST: "public" },
  "routes/auth/sign-out": { GET: "public", POST: "public" },
  "routes/auth/forgot-password": { POST: "public" },
  "reset-password": { GET: "public", POST: "public" },
  welcome: { GET: "public", POST: "public" },
  "routes/account/account": { GET: signedIn, POST: signedIn },
  "routes/people/people": { GET: managers, POST: managers },
  "routes/people/mail": { GET: managers, POST: managers },
  "routes/equipment/list": { GET: signedIn },
  "equipment-new": { GET: managers, POST: managers },
  "routes/equipment/detail": { GET: signedIn },
  "equipment-edit": { GET: managers, POST: managers },
  "routes/bookings/list": { GET: signedIn, POST: signedIn },
  "routes/bookings/detail": { GET: signedIn, POST: signedIn },
  // Instructors read calibration records (they book the equipment they calibrate); only lab staff write them.
  "routes/calibrations/list": { GET: signedIn },
  "calibration-new": { GET: labStaff, POST: labStaff },
  // Posts sign off (lab managers, checked per intent) or remove an attachment (the record's people).
  "routes/calibrations/detail": { GET: signedIn, POST: labStaff },
  "calibration-edit": { GET: labStaff, POST: labStaff },
  "routes/settings/settings": { GET: managers, POST: managers },
  "routes/runs/list": { GET: signedIn, POST: signedIn },
  "routes/runs/rows": { GET: signedIn },
  "routes/runs/sign-off": { POST: managers },
  "routes/runs/report": { GET: signedIn },
  "run-new": { GET: labStaff, POST: labStaff },
  "routes/runs/run": { GET: signedIn },
  "run-edit": { GET: labStaff, POST: labStaff },
  "routes/runs/setup": { GET: labStaff, POST: labStaff },
  "routes/runs/frame-image": { GET: signedIn },
  "routes/runs/overlay": { GET: signedIn },
  "routes/runs/frames-remove": { POST: labStaff },
  "routes/not-found": { GET: "public" },

  // API
  "routes/api/me": { GET: signedIn },
  "routes/api/users": { GET: managers },
  "routes/api/mail": { GET: managers },
  "routes/api/mail-outbox": { GET: managers },
  "routes/api/mail-outbox-send-again": { POST: managers },
  "routes/api/equipment": { GET: signedIn },
  "routes/api/equipment-item": { GET: signedIn },
  "routes/api/runs": { GET: signedIn, POST: labStaff },
  "routes/api/run": { GET: signedIn, PATCH: labStaff },
  "routes/api/run-tracks-csv": { GET: signedIn },
  "routes/api/run-export": { GET: signedIn },
  "routes/api/openapi": { GET: "public" },
  "routes/api/run-frames": { GET: signedIn, POST: labStaff, DELETE: labStaff },
  "routes/api/run-tracking": { GET: signedIn, POST: labStaff, DELETE: labStaff },
  "routes/api/bookings": { GET: signedIn, POST: signedIn },
  "routes/api/booking-item": { GET: signedIn },
  "api-booking-approve": { POST: managers },
  "api-booking-decline": { POST: managers },
  "api-booking-cancel": { POST: signedIn },
  "routes/api/booking-ics": { GET: signedIn },
  // The secret in the address is the credential: calendar apps cannot sign in.
  "routes/api/booking-feed": { GET: "public" },
  "routes/api/calibrations": { GET: signedIn, POST: labStaff },
  "routes/api/calibration-item": { GET: signedIn, PUT: labStaff, PATCH: labStaff },
  "routes/api/run-sign-off": { POST: managers },
  "routes/api/run-view-setup": { PUT: labStaff },
  "routes/api/calibration-sign-off": { POST: managers },
  "routes/api/calibration-attachments": { POST: labStaff },
  "routes/api/calibration-attachment": { GET: signedIn, DELETE: labStaff },
  "routes/api/not-found": { GET: "public", POST: "public", PUT: "public", PATCH: "public", DELETE: "public" },
};

export type Expectation = "public" | "pass" | "sign-in" | "401" | "403" | "refused";

/** What this person should get from this route and method, by the table above. */
export function expectationFor(access: Access | undefined, who: { role: Role | null; by: "anonymous" | "cookie" | "token" }, isApi: boolean): Expectation {
  const role = who.by === "token" && !isApi ? null : who.role;
  if (access === undefined) return "refused";
  if (access === "public") return "public";
  if (role === null) return isApi ? "401" : "sign-in";
  return access.includes(role) ? "pass" : "403";
}
