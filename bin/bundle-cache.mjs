// Start-up speed without a build step: an entry module (the CLI, the worker thread) and everything of
// ours it imports are bundled by esbuild into one plain-JavaScript file, kept in
// node_modules/.cache/darksieve and reused while none of its input files has changed. A command then
// starts in about 0.4 of the time it takes through the tsx loader, which resolves and transforms one
// module at a time, and a worker thread is ready in about 0.3 (`npm run bench -- startup`).
//
// The bundle behaves as the sources do: esbuild also does tsx's TypeScript transform, npm packages
// stay outside the bundle (Node loads them as usual, found through the node_modules folder the cache
// lives in), except the small-module erf package whose ~130 files would otherwise be resolved one by
// one, and every `import.meta.url` of our files is replaced by that file's own URL, so relative
// paths (package.json, the thread entry, the demo spec) resolve as from the sources.
//
// Freshness: a manifest beside each bundle lists every input file with its size and mtime, taken
// before esbuild reads it; any difference, a missing file or a change of esbuild's package.json means a new
// bundle. Bundles are named by their content hash and written to a temporary name first, then
// renamed, so processes building at the same time never see half a file. Superseded bundles are
// deleted after an hour (a running scan may still start a thread from the one it found).
//
// bundledEntry() returns null, and callers load the TypeScript through tsx as before, when
// DARKSIEVE_NO_BUNDLE is set, when the cache folder cannot be written, or when esbuild fails (a
// syntax error is then reported by tsx in the usual way). DARKSIEVE_DEBUG prints why.
//
// `node bin/bundle-cache.mjs` builds the bundles of the CLI and the worker thread at once, for installs
// whose node_modules is read-only afterwards (the compose file's workers).
import { createRequire } from 'node:module';
import { mkdirSync, readFileSync, readdirSync, renameSync, statSync, unlinkSync, writeFileSync } from 'node:fs';
import { readFile } from 'node:fs/promises';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const CACHE_DIR = path.join(ROOT, 'node_modules', '.cache', 'darksieve');
/** bump when the build options below change, so old bundles are not reused */
const FORMAT = 1;
/** npm packages bundled in (many tiny CommonJS files); every other package stays external */
const BUNDLED_PACKAGES = /^@stdlib\//;
/** superseded bundles younger than this are kept for processes that may still start threads from them */
const KEEP_SUPERSEDED_MS = 3600_000;

const debug = (message) => {
  if (process.env.DARKSIEVE_DEBUG) process.stderr.write(`darksieve bundle: ${message}\n`);
};

const statKey = (file) => {
  const s = statSync(file);
  return `${s.size}:${s.mtimeMs}`;
};

/** The bundle recorded for `name`, if every input is unchanged. */
function fresh(name) {
  let manifest;
  try {
    manifest = JSON.parse(readFileSync(path.join(CACHE_DIR, `${name}.json`), 'utf8'));
  } catch {
    return null;
  }
  if (manifest.format !== FORMAT) return null;
  try {
    for (const [file, key] of manifest.inputs) if (statKey(file) !== key) return null;
    statSync(path.join(CACHE_DIR, manifest.bundle));
  } catch {
    return null;
  }
  return manifest;
}

/** Bundles the entry and records it; returns the manifest. */
async function build(name, entryFile) {
  const esbuild = await import('esbuild');
  // another esbuild makes another bundle: its package.json is an input like our files
  const esbuildPackage = createRequire(import.meta.url).resolve('esbuild/package.json');
  const inputs = new Map([[esbuildPackage, statKey(esbuildPackage)]]);
  const ownFiles = {
    name: 'darksieve-own-files',
    setup(b) {
      b.onResolve({ filter: /^[^./]/ }, (args) => (BUNDLED_PACKAGES.test(args.path) ? undefined : { path: args.path, external: true }));
      // this file stays itself (one copy of its in-process build list; its own import.meta.url)
      b.onResolve({ filter: /bundle-cache\.mjs$/ }, (args) => ({ path: pathToFileURL(path.resolve(args.resolveDir, args.path)).href, external: true }));
      b.onLoad({ filter: /\.(ts|mjs|js|cjs|json)$/ }, async (args) => {
        inputs.set(args.path, statKey(args.path));
        const text = await readFile(args.path, 'utf8');
        const own = !args.path.includes(`${path.sep}node_modules${path.sep}`);
        const ext = path.extname(args.path).slice(1);
        const loader = ext === 'ts' ? 'ts' : ext === 'json' ? 'json' : 'js';
        return { contents: own ? text.replaceAll('import.meta.url', JSON.stringify(pathToFileURL(args.path).href)) : text, loader };
      });
    },
  };
  const outdir = path.join(CACHE_DIR, name);
  const result = await esbuild.build({
    entryPoints: { [name]: entryFile }, bundle: true, write: false, platform: 'node', format: 'esm', target: 'node20',
    // lazily imported modules (the CLI's verbs) stay in their own files, and with them the packages
    // they import, so that a verb loads what it needs and no more, as from the sources
    splitting: true, outdir, entryNames: '[name]-[hash]', chunkNames: 'chunk-[hash]', outExtension: { '.js': '.mjs' },
    sourcemap: 'external', sourcesContent: false, logLevel: 'silent', plugins: [ownFiles],
    // CommonJS bundled into an ES module needs a require for Node's own modules
    banner: { js: "import { createRequire as __darksieveRequire } from 'node:module'; const require = __darksieveRequire(import.meta.url);" },
  });
  mkdirSync(outdir, { recursive: true });
  const tmp = `.${process.pid}-${Date.now()}`;
  const entryOut = result.outputFiles.find((f) => path.basename(f.path).startsWith(`${name}-`) && f.path.endsWith('.mjs'));
  // the entry last: whoever finds it finds its chunks complete (the names are content hashes)
  for (const f of [...result.outputFiles.filter((f) => f !== entryOut), entryOut]) {
    writeFileSync(f.path + tmp, f.contents);
    renameSync(f.path + tmp, f.path);
  }
  const bundle = path.relative(CACHE_DIR, entryOut.path);
  const manifest = { format: FORMAT, esbuild: esbuild.version, entry: entryFile, bundle, inputs: [...inputs] };
  const manifestFile = path.join(CACHE_DIR, `${name}.json`);
  writeFileSync(manifestFile + tmp, JSON.stringify(manifest));
  renameSync(manifestFile + tmp, manifestFile);
  prune(outdir, new Set(result.outputFiles.map((f) => f.path)));
  return manifest;
}

/** Deletes files of an entry's earlier builds once they are old enough. */
function prune(outdir, current) {
  const now = Date.now();
  for (const file of readdirSync(outdir)) {
    const full = path.join(outdir, file);
    if (current.has(full)) continue;
    try {
      if (now - statSync(full).mtimeMs > KEEP_SUPERSEDED_MS) unlinkSync(full);
    } catch {
      // another process pruned it first
    }
  }
}

/** builds in progress in this process, by entry name */
const building = new Map();

/**
 * The file URL of an up-to-date bundle of `entryUrl` (a module of this repository), building it when
 * needed, or null when TypeScript should be loaded through tsx instead (see the header).
 * @param {string | URL} entryUrl
 * @returns {Promise<string | null>}
 */
export async function bundledEntry(entryUrl) {
  if (process.env.DARKSIEVE_NO_BUNDLE) {
    debug('DARKSIEVE_NO_BUNDLE is set: loading the TypeScript through tsx');
    return null;
  }
  const entryFile = fileURLToPath(entryUrl);
  const name = path.relative(ROOT, entryFile).replace(/\.[^.]+$/, '').replace(/[^A-Za-z0-9]+/g, '_');
  try {
    let manifest = fresh(name);
    if (!manifest) {
      // threads starting together in this process share one build
      let pending = building.get(name);
      if (!pending) {
        mkdirSync(CACHE_DIR, { recursive: true });
        pending = build(name, entryFile).finally(() => building.delete(name));
        building.set(name, pending);
      }
      manifest = await pending;
      debug(`built ${manifest.bundle} from ${manifest.inputs.length} files`);
    }
    return pathToFileURL(path.join(CACHE_DIR, manifest.bundle)).href;
  } catch (err) {
    debug(`${name}: loading the TypeScript through tsx instead (${err instanceof Error ? err.message : String(err)})`);
    return null;
  }
}

/** The entries darksieve starts from: the CLI, and the worker thread of the embedded pool and of Redis workers. */
const ENTRIES = ['scheduler/cli.ts', 'workers/thread.ts'];

// `node bin/bundle-cache.mjs`: builds the bundles now, for an install whose node_modules is read-only
// afterwards (the compose workers mount it so; without bundles they run through tsx)
if (process.argv[1] && import.meta.url === pathToFileURL(path.resolve(process.argv[1])).href) {
  let failed = 0;
  for (const entry of ENTRIES) {
    const url = await bundledEntry(pathToFileURL(path.join(ROOT, entry)));
    if (url) process.stdout.write(`${entry}: ${fileURLToPath(url)}\n`);
    else {
      failed++;
      process.stdout.write(`${entry}: no bundle (DARKSIEVE_DEBUG=1 says why); darksieve will load it through tsx\n`);
    }
  }
  process.exitCode = failed > 0 ? 1 : 0;
}
