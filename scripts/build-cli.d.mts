export declare const CLI_DIR: string;
export declare function cliEntry(root?: string): string;
export declare function cliState(root?: string): "missing" | "stale" | "fresh";
export declare function buildCli(root?: string): Promise<number>;
