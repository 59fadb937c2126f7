import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';

let tsxApi: string | undefined;

/** tsx's ESM register API, found through its package's export map as `import` would resolve it. */
function tsxEsmApiUrl(): string {
  if (tsxApi) return tsxApi;
  const manifestPath = createRequire(import.meta.url).resolve('tsx/package.json');
  const manifest = JSON.parse(readFileSync(manifestPath, 'utf8')) as {
    exports: { './esm/api': { import: { default: string } } };
  };
  tsxApi = pathToFileURL(join(dirname(manifestPath), manifest.exports['./esm/api'].import.default)).href;
  return tsxApi;
}

/**
 * A worker thread running a TypeScript module. Node will not start a thread from a .ts file itself, so a
 * short script registers tsx first, as the API itself runs under it.
 */
export function startTsThread(moduleUrl: URL): Worker {
  const boot = `import(${JSON.stringify(tsxEsmApiUrl())}).then((api) => { api.register(); return import(${JSON.stringify(moduleUrl.href)}); });`;
  return new Worker(boot, { eval: true });
}
