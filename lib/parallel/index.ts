export { propagateMany, type PropagateOptions } from "./propagateMany.ts";
export { propagatorFor, runTtlTask, type TtlTask, type TtlTaskResult } from "./ttlTask.ts";
