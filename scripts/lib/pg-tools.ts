import { existsSync, readdirSync } from 'node:fs';
import path from 'node:path';

/** The newest installed PostgreSQL client tool of that name (Debian keeps them per version). */
export function pgTool(name: 'pg_dump' | 'pg_restore' | 'psql'): string {
  const base = '/usr/lib/postgresql';
  if (existsSync(base)) {
    const versions = readdirSync(base).sort((a, b) => Number(b) - Number(a));
    for (const v of versions) {
      const p = path.join(base, v, 'bin', name);
      if (existsSync(p)) return p;
    }
  }
  return name;
}
