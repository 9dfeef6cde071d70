/**
 * The values of all tasks, once every one has settled; then the first failure is thrown. A task still
 * writing into the stage folder after it was removed would leave a partial one behind.
 */
export async function settleAll<T>(tasks: Promise<T>[]): Promise<T[]> {
  const settled = await Promise.allSettled(tasks);
  const failed = settled.find((s): s is PromiseRejectedResult => s.status === 'rejected');
  if (failed) throw failed.reason;
  return settled.map((s) => (s as PromiseFulfilledResult<T>).value);
}
