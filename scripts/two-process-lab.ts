// The lab `npm run test:two-process` works in, made in the database named by DATABASE_URL: the
// equipment and people of the test lab, an API token for its technician and a password to sign in
// with (the view setup is a page form, which takes a session rather than a token). Prints one JSON line.
import crypto from "node:crypto";
import { User, migrate, sequelize } from "../app/.server/db";
import { hashPassword } from "../app/.server/auth/password";
import { createApiToken } from "../app/.server/auth/api-tokens";
import { seedRunLab } from "../app/.server/runs/testing";

await migrate();
const lab = await seedRunLab();
const techToken = (await createApiToken(lab.technician.id, "two-process check")).token;
const password = crypto.randomBytes(18).toString("base64url");
await User.update({ passwordHash: await hashPassword(password), passwordChangedAt: new Date() }, { where: { id: lab.technician.id } });
await sequelize.close();
console.log(JSON.stringify({ techToken, email: lab.technician.email, password, tableId: lab.tableA.id, tankId: lab.tank.id, cameraId: lab.camera.id }));
process.exit(0);
