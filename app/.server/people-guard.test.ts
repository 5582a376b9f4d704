import { describe, expect, it } from "vitest";
import { User, migrate } from "./db";
import { changeRole, setActive } from "./people";

async function manager(name: string, withPassword: boolean) {
  const stamp = Math.random().toString(36).slice(2, 8);
  return User.create({
    email: `${name}-${stamp}@tankside.example`,
    name,
    role: "lab_manager",
    passwordHash: withPassword ? "$argon2id$not-a-real-hash" : null,
    passwordChangedAt: withPassword ? new Date() : null,
  });
}

describe("the last lab manager who can sign in", () => {
  it("cannot be demoted or deactivated while the only other manager is an unanswered invitation", async () => {
    await migrate();
    await User.update({ active: false }, { where: {} });
    const real = await manager("real", true);
    const invited = await manager("invited", false);
    await expect(changeRole(real.id, "technician")).rejects.toThrow(/at least one active lab manager/);
    await expect(setActive(real.id, false)).rejects.toThrow(/last active lab manager/);
    await real.reload();
    expect(real.role).toBe("lab_manager");
    expect(real.active).toBe(true);
    // The invitation itself may be withdrawn: it never could sign in.
    await setActive(invited.id, false);
    await invited.reload();
    expect(invited.active).toBe(false);
  });

  it("can step down once a second manager has chosen a password", async () => {
    await migrate();
    await User.update({ active: false }, { where: {} });
    const first = await manager("first", true);
    await manager("second", true);
    await changeRole(first.id, "technician");
    await first.reload();
    expect(first.role).toBe("technician");
  });
});
