// `npm start`'s web server: node --import tsx server/main.ts [--hostname H] [--port P]
import { fileURLToPath } from "node:url";
import { parseArgs } from "node:util";

const { values } = parseArgs({ options: { hostname: { type: "string", short: "H", default: "127.0.0.1" }, port: { type: "string", short: "p", default: "3000" } } });
const port = Number(values.port);
if (!Number.isInteger(port) || port < 0 || port > 65535) {
  console.error(`[stillpoint] --port must be an integer from 0 to 65535 (got "${values.port}")`);
  process.exit(2);
}
// What `next start` does: React and Next load their production builds.
(process.env as Record<string, string>).NODE_ENV = "production";
const { startAppServer } = await import("./app-server.ts");
const running = await startAppServer({ dir: fileURLToPath(new URL("..", import.meta.url)), hostname: values.hostname!, port, startComputePool: true });
console.error(`[stillpoint] listening on http://${values.hostname}:${running.port}`);
let stopping = false;
for (const signal of ["SIGTERM", "SIGINT"] as const) {
  process.on(signal, () => {
    if (stopping) return;
    stopping = true;
    void running.close().finally(() => process.exit(0));
  });
}
