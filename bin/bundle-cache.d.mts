/** See bundle-cache.mjs: the URL of an up-to-date bundle of a module of this repository, or null (use tsx). */
export function bundledEntry(entryUrl: string | URL): Promise<string | null>;
