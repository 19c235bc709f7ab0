#!/usr/bin/env node
// Entry point of `npx stillpoint`: load the TypeScript sources through tsx, then dispatch.
import { register } from "tsx/esm/api";

register();
const { main } = await import("../cli/main.ts");
process.exitCode = await main(process.argv.slice(2));
