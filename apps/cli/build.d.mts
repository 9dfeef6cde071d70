// Types of build.mjs (plain JavaScript so that `pnpm lamina` starts without a TypeScript loader).
export declare const CLI_ROOT: string;
export declare const REPO_ROOT: string;
export declare const DIST: string;
export declare const MAIN: string;
export declare function isStale(dist?: string): boolean;
export declare function workerEntries(): Map<string, string>;
export interface BuildOptions {
  outDir?: string;
  force?: boolean;
  log?: (s: string) => void;
}
export declare function build(options?: BuildOptions): Promise<string>;
export declare function ensureBuilt(options?: BuildOptions): Promise<string>;
