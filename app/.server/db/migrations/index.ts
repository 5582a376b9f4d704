import type { QueryInterface } from "sequelize";
import * as m0001 from "./0001-people-and-sessions";
import * as m0002 from "./0002-equipment";
import * as m0003 from "./0003-runs-and-tracking";
import * as m0004 from "./0004-calibrations-and-bookings";
import * as m0005 from "./0005-run-log-preferences";
import * as m0007 from "./0007-mail-outbox";

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
  { name: "0007-mail-outbox", ...m0007 },
];
