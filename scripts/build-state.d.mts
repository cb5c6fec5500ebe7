export declare const BUILD_SOURCES: string[];
export declare function newestMtime(p: string): number;
export declare function buildState(root: string): "missing" | "stale" | "fresh";
