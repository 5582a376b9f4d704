// npm run first-manager -- <email> "<name>": the first lab manager of a new installation.
// Prints a single-use link (valid for three days) to choose the password.
import { migrate, sequelize } from "../app/.server/db";
import { firstManagerLink, PeopleError } from "../app/.server/people";

const [email, ...nameParts] = process.argv.slice(2);
const name = nameParts.join(" ").trim();
if (!email || !email.includes("@") || !name) {
  console.error('usage: npm run first-manager -- <email> "<full name>"');
  process.exit(2);
}
await migrate();
try {
  const link = await firstManagerLink(email, name);
  console.log(link);
} catch (err) {
  console.error(err instanceof PeopleError ? err.message : err);
  process.exitCode = 1;
} finally {
  await sequelize.close();
}
