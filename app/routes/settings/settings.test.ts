import { beforeAll, describe, expect, it } from "vitest";
import { LabSetting, User, migrate } from "~/.server/db";
import { sessionStorage } from "~/.server/auth/session";
import { getLabId, getLabSettings, getLabTimeZone, setLabTimeZone } from "~/.server/settings";
import { settingDefaults, timeZoneError } from "~/lib/settings";
import { systemTimeZone } from "~/lib/time-format";
import { action, loader } from "./settings";

let cookie = "";

beforeAll(async () => {
  await migrate();
  const user = await User.create({
    email: "settings-manager@tankside.example",
    name: "Sol Settings",
    role: "lab_manager",
    passwordHash: null,
    passwordChangedAt: null,
  });
  const s = await sessionStorage.getSession();
  s.set("userId", user.id);
  cookie = (await sessionStorage.commitSession(s)).split(";")[0] ?? "";
});

type Outcome = { status: number; body: { saved?: boolean; result?: { error?: Record<string, string[]> } } };
async function post(fields: Record<string, string>): Promise<Outcome> {
  const request = new Request("http://localhost/settings", { method: "POST", headers: { Cookie: cookie }, body: new URLSearchParams(fields) });
  const result = (await action({ request, params: {}, context: {} } as never)) as unknown;
  if (result && typeof result === "object" && "init" in result && "data" in result) {
    const { init, data } = result as { init: ResponseInit | null; data: Outcome["body"] };
    return { status: init?.status ?? 200, body: data };
  }
  return { status: 200, body: result as Outcome["body"] };
}
const form = (over: Record<string, string> = {}) => ({ ...Object.fromEntries(Object.entries(settingDefaults).map(([k, v]) => [k, String(v)])), ...over });

describe("the lab's time zone setting", () => {
  it("follows the server's zone until one is set", async () => {
    const settings = await getLabSettings();
    expect(settings.timeZone).toBe(systemTimeZone());
    expect(settings.timeZoneIsServerDefault).toBe(true);
  });

  it("saves an IANA name from the settings page, and the loader gives it back", async () => {
    const saved = await post(form({ timeZone: "Europe/Berlin" }));
    expect(saved.status).toBe(200);
    expect(saved.body.saved).toBe(true);
    expect(await getLabTimeZone()).toBe("Europe/Berlin");
    const page = await loader({ request: new Request("http://localhost/settings", { headers: { Cookie: cookie } }), params: {}, context: {} } as never);
    expect(page.settings.timeZone).toBe("Europe/Berlin");
    expect(page.settings.timeZoneIsServerDefault).toBe(false);
    expect(page.timeZones).toContain("America/New_York");
    expect(page.timeZones).toContain("UTC");
  });

  it("refuses Mars/Olympus with a message on the field, and changes nothing", async () => {
    const refused = await post(form({ timeZone: "Mars/Olympus", spinUpTimesToWait: "7" }));
    expect(refused.status).toBe(400);
    expect(refused.body.result?.error?.timeZone).toEqual([timeZoneError("Mars/Olympus")]);
    expect(timeZoneError("Mars/Olympus")).toContain('"Mars/Olympus" is not a time zone');
    expect(await getLabTimeZone()).toBe("Europe/Berlin");
    expect((await getLabSettings()).spinUpTimesToWait).toBe(settingDefaults.spinUpTimesToWait);
    await expect(setLabTimeZone("Mars/Olympus")).rejects.toThrow(timeZoneError("Mars/Olympus"));
  });

  it("accepts UTC, and an empty field goes back to the server's zone", async () => {
    expect((await post(form({ timeZone: "UTC" }))).status).toBe(200);
    expect(await getLabTimeZone()).toBe("UTC");
    expect((await post(form({ timeZone: "" }))).status).toBe(200);
    expect(await LabSetting.findByPk("timeZone")).toBeNull();
    expect(await getLabTimeZone()).toBe(systemTimeZone());
  });
});

describe("the lab's identifier", () => {
  it("exists from the first start (migration 0012), is a UUID, and does not change", async () => {
    const row = await LabSetting.findByPk("labId");
    expect(row?.value).toMatch(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/);
    expect(await getLabId()).toBe(row!.value);
    expect(await getLabId()).toBe(row!.value);
  });

  it("is made again, once, if a restored database lacks it", async () => {
    await LabSetting.destroy({ where: { key: "labId" } });
    const [a, b] = await Promise.all([getLabId(), getLabId()]);
    expect(a).toBe(b);
    expect(await LabSetting.count({ where: { key: "labId" } })).toBe(1);
  });
});
