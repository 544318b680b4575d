// Each feature's job handlers, registered with the worker. Imported by scripts/worker.ts.
export {};
