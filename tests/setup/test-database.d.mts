export const onPostgres: boolean;
export function freshDatabaseUrl(label: string, dir: string): Promise<string>;
export function queryAll(url: string, sql: string): Promise<Record<string, unknown>[]>;
export function integrityCheck(url: string): Promise<string[]>;
