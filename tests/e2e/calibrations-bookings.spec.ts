import { expect, test, request as playwrightRequest } from "@playwright/test";
import ICAL from "ical.js";
import { apiAs, latestMailId, linkIn, people, signIn, waitForMail } from "./helpers";

/** An hour-aligned local slot `days` ahead, as the datetime-local fields want it. */
function localSlot(days: number, hour: number) {
  const d = new Date();
  d.setDate(d.getDate() + days);
  d.setHours(hour, 0, 0, 0);
  const pad = (n: number) => String(n).padStart(2, "0");
  return { date: d, input: `${d.getFullYear()}-${pad(d.getMonth() + 1)}-${pad(d.getDate())}T${pad(hour)}:00` };
}

test("an instructor requests a table in the browser, the lab manager approves it, the e-mails arrive with links, the week view and .ics show it", async ({
  browser,
  baseURL,
}) => {
  const before = await latestMailId(baseURL!);
  const start = localSlot(9, 13);
  const end = localSlot(9, 15);

  const instructorPage = await (await browser.newContext()).newPage();
  await signIn(instructorPage, people.instructor);
  await instructorPage.goto("/bookings");
  await instructorPage.getByLabel("Equipment").first().selectOption({ label: "Table A (east bench) (rotating table)" });
  await instructorPage.getByLabel("Start", { exact: true }).fill(start.input);
  await instructorPage.getByLabel("End", { exact: true }).fill(end.input);
  await instructorPage.getByLabel("Purpose").fill("Evening demonstration for visitors");
  await expect(instructorPage.getByText(/keep hands clear of the rim/i).first()).toBeVisible();
  await instructorPage.getByRole("button", { name: "Request booking" }).click();
  await expect(instructorPage.getByText(/Booking #\d+ requested/)).toBeVisible();
  const id = Number(/#(\d+)/.exec((await instructorPage.getByText(/Booking #\d+ requested/).textContent())!)![1]);
  // Sent again without a purpose: the form's errors show and the last answer gives way to them.
  await instructorPage.getByLabel("Purpose").fill("");
  await instructorPage.getByRole("button", { name: "Request booking" }).click();
  await expect(instructorPage.getByLabel("Purpose")).toHaveAttribute("aria-invalid", "true");
  await expect(instructorPage.getByText(/Booking #\d+ requested/)).toBeHidden();

  const toManager = await waitForMail(baseURL!, people.manager, "Booking requested: Table A (east bench)", before);
  expect(toManager.text).toContain("Evening demonstration for visitors");
  const link = linkIn(toManager.text, "/bookings/");
  expect(link).toBe(`/bookings/${id}`);

  const managerPage = await (await browser.newContext()).newPage();
  await signIn(managerPage, people.manager);
  await managerPage.goto(link);
  await managerPage.getByRole("button", { name: "Approve booking" }).click();
  await expect(managerPage.getByText("Approved. The requester has been told.")).toBeVisible();

  const toRequester = await waitForMail(baseURL!, people.instructor, "Booking approved: Table A (east bench)", before);
  expect(toRequester.to).toEqual([people.instructor]);
  expect(linkIn(toRequester.text, "/bookings/")).toBe(`/bookings/${id}`);

  // The week view of Table A for that week shows it, and the .ics holds its times in UTC.
  await instructorPage.goto(`/bookings?item=${1}&week=${start.input.slice(0, 10)}`);
  await expect(instructorPage.getByTestId("booking-week").getByText(/Approved · Evening demonstration/)).toBeVisible();
  const ics = await instructorPage.request.get(`/api/v1/bookings/${id}/ics`);
  expect(ics.status()).toBe(200);
  expect(ics.headers()["content-type"]).toContain("text/calendar");
  const event = new ICAL.Event(new ICAL.Component(ICAL.parse(await ics.text())).getFirstSubcomponent("vevent")!);
  expect(event.startDate.zone?.tzid).toBe("UTC");
  expect(event.startDate.toJSDate().getTime()).toBe(start.date.getTime());
  expect(event.endDate.toJSDate().getTime()).toBe(end.date.getTime());
});

test("API: request, racing approvals, decline, cancel and bad input", async ({ baseURL }) => {
  const instructor = await apiAs(baseURL!, people.instructor);
  const manager = await apiAs(baseURL!, people.manager);
  const tech = await apiAs(baseURL!, people.tech);
  const iso = (days: number, h: number) =>
    new Date(Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate() + days, h)).toISOString();
  const equipment = (await (await instructor.get("/api/v1/equipment?kind=table")).json()) as { id: number; name: string; status: string }[];
  const tableB = equipment.find((e) => e.name.startsWith("Table B"))!;
  const tableC = equipment.find((e) => e.status === "out_of_service")!;

  const a = await instructor.post("/api/v1/bookings", { data: { equipmentId: tableB.id, start: iso(20, 9), end: iso(20, 11), purpose: "Race one" } });
  expect(a.status()).toBe(201);
  const aBody = await a.json();
  expect(aBody).toMatchObject({ id: expect.any(Number), state: "requested", equipmentId: tableB.id });
  const b = await (
    await instructor.post("/api/v1/bookings", { data: { equipmentId: tableB.id, start: iso(20, 10), end: iso(20, 12), purpose: "Race two" } })
  ).json();

  expect((await instructor.post(`/api/v1/bookings/${aBody.id}/approve`)).status()).toBe(403);
  expect((await tech.post(`/api/v1/bookings/${aBody.id}/approve`)).status()).toBe(403);
  const [r1, r2] = await Promise.all([manager.post(`/api/v1/bookings/${aBody.id}/approve`), manager.post(`/api/v1/bookings/${b.id}/approve`)]);
  const statuses = [r1.status(), r2.status()].sort();
  expect(statuses).toEqual([200, 409]);
  const loser = r1.status() === 409 ? r1 : r2;
  expect((await loser.json()).error.code).toBe("booking_conflict");

  const loserId = r1.status() === 409 ? aBody.id : b.id;
  const noReason = await manager.post(`/api/v1/bookings/${loserId}/decline`, { data: {} });
  expect(noReason.status()).toBe(400);
  const declined = await manager.post(`/api/v1/bookings/${loserId}/decline`, { data: { reason: "Overlaps the approved race booking." } });
  expect(declined.status()).toBe(200);
  expect(await declined.json()).toMatchObject({ state: "declined", declineReason: "Overlaps the approved race booking." });

  const winnerId = loserId === aBody.id ? b.id : aBody.id;
  expect((await tech.post(`/api/v1/bookings/${winnerId}/cancel`)).status()).toBe(403);
  const cancelled = await instructor.post(`/api/v1/bookings/${winnerId}/cancel`);
  expect(cancelled.status()).toBe(200);
  expect((await cancelled.json()).state).toBe("cancelled");

  const mine = (await (await instructor.get(`/api/v1/bookings?mine=1&equipmentId=${tableB.id}&state=cancelled`)).json()) as { id: number }[];
  expect(mine.map((x) => x.id)).toContain(winnerId);
  expect((await instructor.get("/api/v1/bookings?state=maybe")).status()).toBe(400);

  const bad = async (data: object) => instructor.post("/api/v1/bookings", { data });
  const endFirst = await bad({ equipmentId: tableB.id, start: iso(21, 12), end: iso(21, 10), purpose: "Backwards" });
  expect(endFirst.status()).toBe(422);
  expect((await endFirst.json()).error.message).toMatch(/end must be after the start/i);
  expect((await bad({ equipmentId: tableB.id, start: iso(-2, 10), end: iso(-2, 12), purpose: "Yesterday" })).status()).toBe(422);
  expect((await bad({ equipmentId: 99999, start: iso(21, 10), end: iso(21, 12), purpose: "Nothing" })).status()).toBe(404);
  expect((await (await bad({ equipmentId: tableC.id, start: iso(21, 10), end: iso(21, 12), purpose: "Broken" })).json()).error.code).toBe(
    "equipment_unavailable",
  );
  expect((await bad({ equipmentId: tableB.id, start: "tomorrow", end: iso(21, 12), purpose: "Vague" })).status()).toBe(400);
  for (const c of [instructor, manager, tech]) await c.dispose();
});

test("a technician records a rate calibration, the lab manager signs it off, after which it cannot change", async ({ browser, baseURL }) => {
  const techPage = await (await browser.newContext()).newPage();
  await signIn(techPage, people.tech);
  await techPage.goto("/calibrations/new?kind=rate");
  // Table A: Table B keeps its past-due record for the demo check below.
  await techPage.getByLabel("Table").selectOption({ label: "Table A (east bench)" });
  await techPage.getByLabel("Rate meter used").selectOption({ label: "Optical tachometer T1" });
  const readings = [
    [5, 5.012],
    [10, 10.031],
    [15, 15.052],
    [20, 20.069],
  ];
  for (const [i, [s, m]] of readings.entries()) {
    await techPage.getByLabel(`Set rate ${i + 1}`, { exact: true }).fill(String(s));
    await techPage.getByLabel(`Measured rate ${i + 1}`, { exact: true }).fill(String(m));
  }
  await techPage.getByRole("button", { name: "Save the record" }).click();
  await expect(techPage).toHaveURL(/\/calibrations\/\d+$/);
  await expect(techPage.getByText("Awaiting sign-off").first()).toBeVisible();
  const id = Number(/\/calibrations\/(\d+)$/.exec(techPage.url())![1]);

  const managerPage = await (await browser.newContext()).newPage();
  await signIn(managerPage, people.manager);
  await managerPage.goto(`/calibrations/${id}`);
  await managerPage.getByRole("button", { name: "Sign off" }).click();
  await managerPage.getByRole("button", { name: "Yes, sign it off" }).click();
  await expect(managerPage.getByText(/Signed off\. From now on/)).toBeVisible();
  await expect(managerPage.getByText("In force").first()).toBeVisible();

  // Page and API both refuse a change now.
  await techPage.goto(`/calibrations/${id}/edit`);
  await expect(techPage.getByText("Signed off: this record cannot change")).toBeVisible();
  const tech = await apiAs(baseURL!, people.tech);
  const before = await (await tech.get(`/api/v1/calibrations/${id}`)).json();
  const put = await tech.put(`/api/v1/calibrations/${id}`, {
    data: {
      kind: "rate",
      equipmentId: before.equipmentId,
      meterId: before.meterId,
      performedOn: before.performedOn,
      readings: readings.map(([s]) => ({ setRpm: s, measuredRpm: s })),
    },
  });
  expect(put.status()).toBe(409);
  expect((await put.json()).error.code).toBe("calibration_signed");
  expect(await (await tech.get(`/api/v1/calibrations/${id}`)).json()).toEqual(before);

  // Bad input: two readings, a zero rate, a due date before the calibration date, a text file as an attachment.
  const base = { kind: "rate", equipmentId: before.equipmentId, meterId: before.meterId, performedOn: before.performedOn };
  const two = await tech.post("/api/v1/calibrations", {
    data: {
      ...base,
      readings: [
        { setRpm: 5, measuredRpm: 5 },
        { setRpm: 10, measuredRpm: 10 },
      ],
    },
  });
  expect(two.status()).toBe(400);
  expect((await two.json()).error.message).toMatch(/3 or more/);
  expect(
    (
      await tech.post("/api/v1/calibrations", {
        data: {
          ...base,
          readings: [
            { setRpm: 0, measuredRpm: 0 },
            { setRpm: 5, measuredRpm: 5 },
            { setRpm: 10, measuredRpm: 10 },
          ],
        },
      })
    ).status(),
  ).toBe(400);
  const early = await tech.post("/api/v1/calibrations", {
    data: { ...base, dueOn: "2000-01-01", readings: readings.map(([s, m]) => ({ setRpm: s, measuredRpm: m })) },
  });
  expect(early.status()).toBe(400);
  expect((await early.json()).error.message).toMatch(/due date cannot be before/);
  const draft = await (
    await tech.post("/api/v1/calibrations", { data: { ...base, readings: readings.map(([s, m]) => ({ setRpm: s, measuredRpm: m })) } })
  ).json();
  const notImage = await tech.post(`/api/v1/calibrations/${draft.id}/attachments`, {
    multipart: { file: { name: "certificate.pdf", mimeType: "application/pdf", buffer: Buffer.from("not a pdf at all") } },
  });
  expect(notImage.status()).toBe(422);
  expect((await notImage.json()).error.code).toBe("unsupported_attachment");
  const pdf = await tech.post(`/api/v1/calibrations/${draft.id}/attachments`, {
    multipart: {
      file: { name: "certificate.pdf", mimeType: "application/pdf", buffer: Buffer.from("%PDF-1.4\n1 0 obj\n<<>>\nendobj\ntrailer\n<<>>\n%%EOF\n") },
    },
  });
  expect(pdf.status()).toBe(201);
  const download = await tech.get((await pdf.json()).url);
  expect(download.status()).toBe(200);
  expect(download.headers()["content-type"]).toBe("application/pdf");
  const anon = await playwrightRequest.newContext({ baseURL });
  expect((await anon.get((await pdf.json()).url)).status()).toBe(401);
  await anon.dispose();
  await tech.dispose();
});

test("the demo shows a past-due calibration on its table and sends its reminder to the lab managers once", async ({ page, baseURL }) => {
  await signIn(page, people.tech);
  await page.goto("/equipment");
  await page.getByRole("link", { name: "Table B (west bench)" }).click();
  await expect(page.getByText("Past due").first()).toBeVisible();
  const reminder = await waitForMail(baseURL!, people.manager, "Calibration past due: Rate calibration of Table B (west bench)");
  expect(reminder.to).toEqual(expect.arrayContaining([people.manager]));
  expect(linkIn(reminder.text, "/calibrations/")).toMatch(/^\/calibrations\/\d+$/);
  const manager = await apiAs(baseURL!, people.manager);
  const all = (await (await manager.get(`/api/v1/mail?to=${encodeURIComponent(people.manager)}`)).json()) as { subject: string }[];
  expect(all.filter((m) => m.subject.startsWith("Calibration past due: Rate calibration of Table B")).length).toBe(1);
  await manager.dispose();
});

test("role gates: 401 anonymous, 403 beyond the role, 200 within it", async ({ baseURL }) => {
  const anon = await playwrightRequest.newContext({ baseURL });
  for (const path of ["/api/v1/bookings", "/api/v1/bookings/1", "/api/v1/bookings/1/ics", "/api/v1/calibrations", "/api/v1/calibrations/1"]) {
    const res = await anon.get(path);
    expect(res.status(), path).toBe(401);
  }
  expect((await anon.post("/api/v1/bookings/1/approve")).status()).toBe(401);
  expect((await anon.post("/api/v1/bookings", { data: {} })).status()).toBe(401);
  for (const path of ["/bookings", "/bookings/1", "/calibrations", "/calibrations/1", "/settings"]) {
    const res = await anon.get(path, { maxRedirects: 0 });
    expect(res.status(), path).toBe(302);
    expect(res.headers().location).toContain("/sign-in");
  }
  expect((await anon.get("/api/v1/feeds/tkc_nonsense/bookings.ics")).status()).toBe(404);
  await anon.dispose();

  const expectations: [string, string, Record<string, number>][] = [
    ["GET", "/bookings", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/bookings/1", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/calibrations", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }], // read-only for instructors: they book what is calibrated
    ["GET", "/calibrations/new", { [people.instructor]: 403, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/calibrations/1", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/settings", { [people.instructor]: 403, [people.tech]: 403, [people.manager]: 200 }],
    ["GET", "/api/v1/bookings", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/api/v1/bookings/1/ics", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["GET", "/api/v1/calibrations", { [people.instructor]: 200, [people.tech]: 200, [people.manager]: 200 }],
    ["POST", "/api/v1/calibrations/1/sign-off", { [people.instructor]: 403, [people.tech]: 403 }],
    ["POST", "/api/v1/bookings/1/decline", { [people.instructor]: 403, [people.tech]: 403 }],
    ["POST", "/api/v1/calibrations", { [people.instructor]: 403 }],
  ];
  for (const email of [people.instructor, people.tech, people.manager]) {
    const ctx = await apiAs(baseURL!, email);
    for (const [method, path, codes] of expectations) {
      if (!(email in codes)) continue;
      const res = method === "GET" ? await ctx.get(path, { maxRedirects: 0 }) : await ctx.post(path, { data: {} });
      expect(res.status(), `${email} ${method} ${path}`).toBe(codes[email]);
    }
    await ctx.dispose();
  }
});

test("settings: the lab manager changes the reminder days; a bad value is refused with a message and nothing changes", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/settings");
  const reminder = page.getByLabel("Reminder before a calibration is due");
  await reminder.fill("400");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText(/must be at most 365 days/)).toBeVisible();
  await page.goto("/settings");
  await expect(reminder).toHaveValue("14");
  await reminder.fill("21");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
  await page.goto("/settings");
  await expect(reminder).toHaveValue("21");
  await reminder.fill("14");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
});

test("settings: the lab manager names the lab's time zone; Mars/Olympus is refused with a message; pages then name the zone", async ({ page }) => {
  await signIn(page, people.manager);
  await page.goto("/settings");
  const zone = page.getByLabel("Lab time zone");
  await expect(zone).toHaveValue("");
  await zone.fill("Mars/Olympus");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText('"Mars/Olympus" is not a time zone Tankside knows.', { exact: false })).toBeVisible();
  await page.goto("/settings");
  await expect(zone).toHaveValue("");
  await zone.fill("Asia/Kolkata");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
  await page.goto("/settings");
  await expect(zone).toHaveValue("Asia/Kolkata");
  // India's offset, named on the page, whatever the zone of the machine running the server.
  await expect(page.getByText(/Now it reads \d{1,2} \w{3} \d{4}, \d{2}:\d{2} GMT\+5:30\./)).toBeVisible();
  await page.goto("/bookings/1");
  await expect(page.getByText(/GMT\+5:30/).first()).toBeVisible();
  await page.goto("/settings");
  await zone.fill("");
  await page.getByRole("button", { name: "Save settings" }).click();
  await expect(page.getByText("Settings saved.")).toBeVisible();
});
