// A chunk worker (lib/jobs/event-chunk.ts) in its own process for the kill test of tests/integration/event-flow.test.ts.
// With HANG_AT=events it stops in the middle of its first chunk (after the first slice was counted, before the part
// is stored); with HANG_AT=stored it stops after storing its part but before BullMQ hears that the chunk is done.
// Either way it keeps its lock renewed (timers still run) until the test kills it with SIGKILL, and prints
// `HUNG <chunk index> <phase>` once it is there.
import '../../../scripts/server-only-shim';

const hangAt = process.env.HANG_AT === 'stored' ? 'stored' : 'events';
const { startEventChunkWorker } = await import('@/lib/jobs/event-chunk');
const { worker } = startEventChunkWorker({
  name: `hanging-chunk-worker-${process.pid}`,
  onProgress: async (data, phase) => {
    if (phase !== hangAt) return;
    console.log(`HUNG ${data.chunkIndex} ${phase}`);
    await new Promise(() => undefined);
  },
});
await worker.waitUntilReady();
console.log('READY');
