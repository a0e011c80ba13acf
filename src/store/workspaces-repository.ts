/**
 * Workspaces: the unit of isolation. Every other object belongs to exactly one workspace.
 */
import { randomUUID } from 'node:crypto';
import type { Db } from './db.js';

/** A workspace as stored. */
export interface WorkspaceRow {
  readonly id: string;
  readonly name: string;
  readonly createdAt: Date;
}

interface RawWorkspace {
  id: string;
  name: string;
  created_at: Date | string;
}

const toWorkspace = (r: RawWorkspace): WorkspaceRow => ({ id: r.id, name: r.name, createdAt: new Date(r.created_at) });

/** Repository factory; every method takes an optional transaction to run inside. */
export function createWorkspacesRepository(db: Db) {
  return {
    /** Insert a workspace and return it. */
    async create(name: string, tx?: Db): Promise<WorkspaceRow> {
      const res = await (tx ?? db).query<RawWorkspace>(
        'INSERT INTO workspaces (id, name) VALUES ($1, $2) RETURNING id, name, created_at',
        [randomUUID(), name],
      );
      return toWorkspace(res.rows[0]);
    },

    /** The workspace with this id, or null. */
    async findById(id: string, tx?: Db): Promise<WorkspaceRow | null> {
      const res = await (tx ?? db).query<RawWorkspace>('SELECT id, name, created_at FROM workspaces WHERE id = $1', [id]);
      return res.rows[0] ? toWorkspace(res.rows[0]) : null;
    },

    /** Number of workspaces (0 means a fresh database). */
    async count(tx?: Db): Promise<number> {
      const res = await (tx ?? db).query<{ n: number | string }>('SELECT count(*)::int AS n FROM workspaces');
      return Number(res.rows[0].n);
    },
  };
}

/** The workspaces repository. */
export type WorkspacesRepository = ReturnType<typeof createWorkspacesRepository>;
