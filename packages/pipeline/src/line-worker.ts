// Worker-thread task module for the process pipeline (started by `startWorker`, @lamina/runtime-files).
import { serveTasks } from '@lamina/runtime-files';
import { keptBuffers, pass1, pass2, type Pass1Task, type Pass2Task, type Pass1Result, type Pass2Result } from './line-task';
import { radargramIndex, type RadargramIndexTask } from './outputs';
import { sideOutputs, type SideOutputsResult, type SideOutputsTask } from './side-outputs';

await serveTasks<Pass1Task | Pass2Task | SideOutputsTask | RadargramIndexTask, Pass1Result | Pass2Result | SideOutputsResult | undefined>(async (task) => {
  if (task.kind === 'sideOutputs') return { result: await sideOutputs(task) };
  if (task.kind === 'radargramIndex') {
    await radargramIndex(task);
    return { result: undefined };
  }
  if (task.kind === 'pass1') {
    const r = await pass1(task);
    return { result: r, transfer: keptBuffers(r.kept) };
  }
  const r = await pass2(task);
  const transfer = [r.values.buffer, r.x.buffer, r.y.buffer].filter(
    (b, i, all): b is ArrayBuffer => b instanceof ArrayBuffer && all.indexOf(b) === i,
  );
  return { result: r, transfer };
});
