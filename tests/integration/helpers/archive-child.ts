// A child process for the interrupted-archive test (tests/integration/archive.test.ts): an archive worker that, after
// copying part PAUSE_AFTER_PART of a multipart copy, says so on stdout and then stops doing anything, so that the
// test can SIGKILL it at a known point in the middle of a copy. Run with `node --import tsx`.
import '../../../scripts/server-only-shim';

const pauseAfter = Number(process.env.PAUSE_AFTER_PART ?? '2');
const { startArchiveWorker } = await import('@/lib/jobs/archive');
const { worker } = startArchiveWorker({
  name: `archive-child-${process.pid}`,
  sweep: false,
  onCopyPart: async ({ partNumber, parts }) => {
    if (partNumber < pauseAfter) return;
    process.stdout.write(`PAUSED part ${partNumber} of ${parts}\n`);
    await new Promise(() => undefined); // never resolves: the test kills this process here
  },
});
await worker.waitUntilReady();
process.stdout.write('READY\n');
