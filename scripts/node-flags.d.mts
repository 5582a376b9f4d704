export declare const serverNodeFlags: readonly string[];
