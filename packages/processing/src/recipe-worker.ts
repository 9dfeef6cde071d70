// Worker-thread task module: runs one recipe per task. Started by pool.ts; not imported by index.ts.
import { serveTasks } from '@lamina/runtime-files';
import { runRecipe, type RecipeResult } from './recipe';
import type { RecipeTask } from './pool';

await serveTasks<RecipeTask, RecipeResult>((task) => {
  const result = runRecipe(task.line, task.recipe, task.ctx, task.options);
  const buffers = new Set<ArrayBuffer>([result.line.data.buffer as ArrayBuffer]);
  if (result.before) buffers.add(result.before.data.buffer as ArrayBuffer);
  return { result, transfer: [...buffers] };
});
