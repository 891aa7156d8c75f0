// esbuild alias for "node:module" in the command's CommonJS bundle (scripts/bundle-cli.mjs):
// the sources' createRequire(import.meta.url) is the bundle's own require there (the same
// folder: import.meta.url is the bundle file's URL), so Node's "module" built-in, which
// loads Node's ES module loader when required (~20 internal modules), is never loaded.
// eslint-disable-next-line no-undef
export const createRequire = () => require;
