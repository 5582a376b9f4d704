import { migrate } from "./migrate";
import { sequelize } from "./connection";

const applied = await migrate();
console.error(applied.length ? `Applied: ${applied.join(", ")}` : "Database is up to date.");
await sequelize.close();
