// Worker-thread entry of bench/monte_carlo.ts: the benchmark is TypeScript, so load it through tsx.
import { register } from "tsx/esm/api";

register();
await import("./monte_carlo.ts");
