// Runs s3rver (a fake S3 server from npm) for the tests, started by tests/setup/fake-s3.ts as
// `node --openssl-legacy-provider fake-s3-server.mjs <dir>`: s3rver makes ListObjectsV2
// continuation tokens with DES, which OpenSSL 3 offers only through its legacy provider, so a
// listing longer than one page failed without it. Prints {"port":…} once listening; stops when
// its standard input closes (the test process ended, however it ended).
import S3rver from "s3rver";

const directory = process.argv[2];
if (!directory) {
  console.error("usage: fake-s3-server.mjs <directory>");
  process.exit(2);
}
const server = new S3rver({ address: "127.0.0.1", port: 0, directory, silent: true });
const { port } = await server.run();
process.stdout.write(`${JSON.stringify({ port })}\n`);
const stop = () => server.close().finally(() => process.exit(0));
process.stdin.on("end", stop);
process.stdin.on("error", stop);
process.stdin.resume();
process.on("SIGTERM", stop);
