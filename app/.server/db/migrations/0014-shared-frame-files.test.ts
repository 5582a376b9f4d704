import { describe, expect, it } from "vitest";
import { createMigrator } from "../migrate";
import { Frame, sequelize } from "..";

describe("migration 0014 on a database already in use", () => {
  it("leaves existing frames on their own run's files, readable by the model, and goes down and up again", async () => {
    const migrator = createMigrator();
    await migrator.up({ to: "0012-lab-identity" });
    // Rows as they were before 0014, written through the query interface so each database gets its own dates.
    const qi = sequelize.getQueryInterface();
    const then = new Date("2026-12-01T10:00:00.000Z");
    await qi.bulkInsert("users", [
      { id: 910, email: "older@tankside.example", name: "Older", role: "technician", password_hash: null, active: true, created_at: then, updated_at: then },
    ]);
    await qi.bulkInsert("equipment", [
      { id: 911, kind: "table", name: "Old table", status: "in_service", created_at: then, updated_at: then },
      { id: 912, kind: "tank", name: "Old tank", status: "in_service", created_at: then, updated_at: then },
      { id: 913, kind: "camera", name: "Old camera", status: "in_service", created_at: then, updated_at: then },
    ]);
    await qi.bulkInsert("runs", [
      {
        id: 914,
        table_id: 911,
        tank_id: 912,
        camera_id: 913,
        technician_id: 910,
        set_rate_rpm: 10,
        direction: "ccw",
        water_depth_m: 0.1,
        water_temperature_c: 20,
        camera_mode: "rotating",
        frame_rate_fps: 30,
        tracer: "float",
        purpose: "Before shared frames",
        state: "frames_in",
        created_at: then,
        updated_at: then,
      },
    ]);
    const frame = {
      run_id: 914,
      position: 0,
      original_name: "f0.png",
      stored_name: "11111111-1111-4111-8111-111111111111.png",
      thumb_name: null,
      sha256: "a".repeat(64),
      format: "png",
      width_px: 4,
      height_px: 4,
      size_bytes: 1,
      time_s: null,
      created_at: then,
    };
    await qi.bulkInsert("frames", [frame]);

    await migrator.up();
    const old = await Frame.findOne({ where: { runId: 914 } });
    expect(old?.fileRunId).toBeNull();
    // A correction's row naming that run's file is found by the index the migration adds.
    await Frame.create({
      runId: 914,
      fileRunId: 914,
      position: 1,
      originalName: "f1.png",
      storedName: "s.png",
      thumbName: null,
      sha256: "b".repeat(64),
      format: "png",
      widthPx: 4,
      heightPx: 4,
      sizeBytes: 1,
      timeS: null,
    });
    expect(await Frame.count({ where: { fileRunId: 914 } })).toBe(1);
    // A row cannot name the files of a run that does not exist.
    await expect(
      Frame.create({
        runId: 914,
        fileRunId: 999_999,
        position: 2,
        originalName: "f2.png",
        storedName: "t.png",
        thumbName: null,
        sha256: "c".repeat(64),
        format: "png",
        widthPx: 4,
        heightPx: 4,
        sizeBytes: 1,
        timeS: null,
      }),
    ).rejects.toThrow(/foreign key/i);

    await migrator.down({ to: "0014-shared-frame-files" });
    expect(Object.keys(await qi.describeTable("frames"))).not.toContain("file_run_id");
    expect(await qi.select(null, "frames", { where: { run_id: 914 } })).toHaveLength(2);
    await migrator.up();
    expect(Object.keys(await qi.describeTable("frames"))).toContain("file_run_id");
  });
});
