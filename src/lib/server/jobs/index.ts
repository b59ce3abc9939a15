export { enqueueJob, getJob, findJob, findJobByKey, listJobs, cancelJob, purgeEndedJobs, jobView, JOB_STATES, type JobRow, type JobView, type JobState, type EnqueueInput } from './queue';
export { registerJobKind, addFinishedHook, addFailedHook, jobKind, registeredKinds, JobFailure, DEFAULT_LIMITS, type JobKind, type JobContext, type JobKindLimits, type JobOutcome, type FinishedHook, type FailedHook } from './registry';
export { startWorker, type Worker, type WorkerOptions } from './worker';
export { runQueuedJobs, type DrainOptions } from './drain';
export { closeThreadPools, ThreadOutOfMemory, type ThreadRunner } from './threads';
