/**
 * Tickets that let the embedded pool take back a chunk it posted to a busy thread and give it to an
 * idle one (the end of a scan, when nothing else is left to hand out).
 *
 * A posted chunk carries a ticket: a cell of an Int32Array on a SharedArrayBuffer that the pool and
 * every thread see. A thread claims the chunk before evaluating it (POSTED -> STARTED); the pool
 * withdraws it (POSTED -> WITHDRAWN); both by compare-and-exchange, so exactly one of them wins and a
 * chunk is never evaluated by two threads nor by none. A thread that finds its chunk withdrawn answers
 * 'skipped', after which the pool may use the cell again (not before: the thread still holds the
 * message naming it).
 */

const POSTED = 1;
const STARTED = 2;
const WITHDRAWN = 3;

/** No ticket: the chunk cannot be withdrawn (every cell was in use). */
export const NO_TICKET = -1;

/** The pool's side: hands out cells and withdraws chunks not yet started. */
export class ChunkTickets {
  /** shared with the threads (workerData) */
  readonly buffer: SharedArrayBuffer;
  private readonly states: Int32Array;
  private readonly free: number[];

  constructor(capacity: number) {
    this.buffer = new SharedArrayBuffer(4 * capacity);
    this.states = new Int32Array(this.buffer);
    this.free = Array.from({ length: capacity }, (_, i) => capacity - 1 - i);
  }

  /** A cell for a chunk about to be posted, or NO_TICKET when all are in use. */
  issue(): number {
    const t = this.free.pop();
    if (t === undefined) return NO_TICKET;
    Atomics.store(this.states, t, POSTED);
    return t;
  }

  /** True when the chunk had not started and now never will (its thread will answer 'skipped'). */
  withdraw(ticket: number): boolean {
    return ticket !== NO_TICKET && Atomics.compareExchange(this.states, ticket, POSTED, WITHDRAWN) === POSTED;
  }

  /** The thread answered for this ticket (result, error or skipped), or died holding it. */
  release(ticket: number): void {
    if (ticket === NO_TICKET) return;
    Atomics.store(this.states, ticket, 0);
    this.free.push(ticket);
  }
}

/** The thread's side: true when it may evaluate the chunk (it claimed it before any withdrawal). */
export function claimTicket(states: Int32Array, ticket: number): boolean {
  return ticket === NO_TICKET || Atomics.compareExchange(states, ticket, POSTED, STARTED) === POSTED;
}
