/**
 * Run async tasks one at a time in the order they were queued. A failed task rejects its own promise
 * and does not stop the queue.
 */
export class SerialQueue {
  private tail: Promise<unknown> = Promise.resolve();

  run<T>(task: () => Promise<T>): Promise<T> {
    const next = this.tail.then(task, task);
    this.tail = next.catch(() => undefined);
    return next;
  }
}
