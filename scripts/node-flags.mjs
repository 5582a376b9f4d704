/**
 * The V8 option every Tankside process that decodes frames starts with: `npm run dev`, `npm start`
 * and `npm run worker` (package.json), the processes the demo, the browser tests, the two-process
 * check and `npm run bench:upload` start, and `npm run bench`, which measures what a job costs in
 * such a process (Decision 98).
 *
 * sharp hands back every decoded frame as a new buffer held outside V8's heap, and V8 counts such
 * memory against a heap's next full collection. A web server's heap holds about 10 MB, so its limit
 * stays small and a tracking pass set off a full collection every 12 or so frames (35 in 1 200 float
 * frames, 95 in 1 200 dye frames). Starting the heap at 64 MB lets the young generation's
 * collections free those buffers first: one full collection in the same passes, and about 1 ms less
 * of processor time a frame. V8 takes the option only from the command line: set at run time it
 * does not change a heap already made, and Node refuses it in NODE_OPTIONS and in a worker thread's
 * own options (worker-options.ts leaves it out there; V8's options hold for every thread anyway).
 */
export const serverNodeFlags = Object.freeze(["--initial-heap-size=64"]);
