export interface DatabaseFreeEntry {
  /** "folder/**" (everything under it) or one file, from the repository's root */
  glob: string;
  why: string;
  /** programs the tests start, whose imports are followed too */
  children?: string[];
}
export declare const databaseFree: DatabaseFreeEntry[];
export declare const databaseFreeTests: string[];
