import { describe, expect, it } from "vitest";
import { createMigrator } from "../migrate";
import { sequelize } from "..";

describe("migration 0013 (the rate read from the footage)", () => {
  it("adds the table mark to view setups and the measured rate to tracking jobs, and takes them away again", async () => {
    const migrator = createMigrator();
    await migrator.up();
    const qi = sequelize.getQueryInterface();
    const setups = await qi.describeTable("view_setups");
    const jobs = await qi.describeTable("tracking_jobs");
    expect(Object.keys(setups)).toEqual(expect.arrayContaining(["rate_mark_x_px", "rate_mark_y_px"]));
    expect(Object.keys(jobs)).toEqual(
      expect.arrayContaining(["measured_omega", "measured_omega_se", "measured_omega_method", "measured_omega_points", "measured_omega_note"]),
    );
    await migrator.down({ to: "0013-rate-from-footage" });
    expect(Object.keys(await qi.describeTable("view_setups"))).not.toContain("rate_mark_x_px");
    expect(Object.keys(await qi.describeTable("tracking_jobs"))).not.toContain("measured_omega");
    await migrator.up();
    expect(Object.keys(await qi.describeTable("tracking_jobs"))).toContain("measured_omega_note");
  });
});
