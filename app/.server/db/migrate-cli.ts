// npm run migrate: a database that cannot be used is one line naming DATABASE_URL, as at server start.
try {
  const { databaseProblem, sequelize } = await import("./connection");
  const { migrate } = await import("./migrate");
  const problem = await databaseProblem();
  if (problem) {
    console.error(problem.replace("Tankside will not start", "Cannot migrate"));
    process.exit(1);
  }
  const applied = await migrate();
  console.error(applied.length ? `Applied: ${applied.join(", ")}` : "Database is up to date.");
  await sequelize.close();
} catch (err) {
  if (!(err as { startupProblem?: boolean }).startupProblem) throw err;
  console.error((err as Error).message.replace("Tankside will not start", "Cannot migrate"));
  process.exit(1);
}
export {};
