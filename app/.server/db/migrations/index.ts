import type { QueryInterface } from "sequelize";
import * as m0001 from "./0001-people-and-sessions";
import * as m0002 from "./0002-equipment";
import * as m0003 from "./0003-runs-and-tracking";
import * as m0004 from "./0004-calibrations-and-bookings";
import * as m0005 from "./0005-run-log-preferences";
import * as m0006 from "./0006-check-provenance";
import * as m0007 from "./0007-mail-outbox";
import * as m0008 from "./0008-session-idle-and-token-expiry";
import * as m0009 from "./0009-calibration-history";
import * as m0010 from "./0010-camera-scale-tolerance";
import * as m0011 from "./0011-tracking-job-leases";
import * as m0012 from "./0012-lab-identity";
import * as m0013 from "./0013-rate-from-footage";
import * as m0014 from "./0014-shared-frame-files";
import * as m0015 from "./0015-streamed-detections";
import * as m0016 from "./0016-view-tilt-marks";

export interface Migration {
  name: string;
  up: (params: { context: QueryInterface }) => Promise<void>;
  down: (params: { context: QueryInterface }) => Promise<void>;
}

/** Listed explicitly (not globbed) so the built server, tsx scripts and Vitest all see the same list. */
export const migrations: Migration[] = [
  { name: "0001-people-and-sessions", ...m0001 },
  { name: "0002-equipment", ...m0002 },
  { name: "0003-runs-and-tracking", ...m0003 },
  { name: "0004-calibrations-and-bookings", ...m0004 },
  { name: "0005-run-log-preferences", ...m0005 },
  { name: "0006-check-provenance", ...m0006 },
  { name: "0007-mail-outbox", ...m0007 },
  { name: "0008-session-idle-and-token-expiry", ...m0008 },
  { name: "0009-calibration-history", ...m0009 },
  { name: "0010-camera-scale-tolerance", ...m0010 },
  { name: "0011-tracking-job-leases", ...m0011 },
  { name: "0012-lab-identity", ...m0012 },
  { name: "0013-rate-from-footage", ...m0013 },
  { name: "0014-shared-frame-files", ...m0014 },
  { name: "0015-streamed-detections", ...m0015 },
  { name: "0016-view-tilt-marks", ...m0016 },
];
