/**
 * The hand-over of finished chunks from a transport to the scheduler, shared by both transports:
 * outcomes arrive in any order and wait here until the scheduler's single `take()` asks for one.
 *
 * `handOver` runs synchronously at the moment an outcome leaves the queue (at `put` when the
 * scheduler is already waiting, at `take` otherwise). The Redis transport uses it to record the
 * acknowledgement of a result exactly when the scheduler receives it.
 */
export class OutcomeQueue<T, R = T> {
  private readonly waiting: T[] = [];
  private waiter: ((r: R) => void) | null = null;

  constructor(private readonly handOver: (item: T) => R) {}

  /** outcomes received and not yet handed over */
  get size(): number {
    return this.waiting.length;
  }

  put(item: T): void {
    const w = this.waiter;
    if (w) {
      this.waiter = null;
      w(this.handOver(item));
    } else this.waiting.push(item);
  }

  /** The next outcome; one caller at a time. */
  take(): Promise<R> {
    if (this.waiting.length > 0) return Promise.resolve(this.handOver(this.waiting.shift()!));
    if (this.waiter) throw new Error('next() is already waiting');
    return new Promise((resolve) => {
      this.waiter = resolve;
    });
  }
}
