export {
  createComputePool, propagateHere, type ComputePool, type PropagationOptions,
} from "./computePool.ts";
export type { ComputeTask, EvaluateTask, SharedModel } from "./computeTask.ts";
export { propagateMany, type PropagateOptions } from "./propagateMany.ts";
export { propagatorFor, runTtlTask, type TtlTask, type TtlTaskResult } from "./ttlTask.ts";
