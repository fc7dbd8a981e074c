// Worker-thread entry for the embedded pool. Node 20 does not apply the parent's tsx loader hooks to
// worker threads (nodejs/node#47747), so the thread registers tsx itself, then loads the TypeScript
// entry (stack.md §1.4).
import { register } from 'tsx/esm/api';

register();
await import(new URL('./thread.ts', import.meta.url).href);
