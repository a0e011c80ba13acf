/** Request and response schemas of /v1/keys and /v1/workspace. */
import { z } from 'zod';
import { SCOPES } from '../../app/keys/key-secret.js';

export const Scope = z.enum(SCOPES);

export const KeyView = z.object({
  id: z.string().uuid(),
  prefix: z.string().describe('Public part of the key (fk_<prefix>_…); the secret is never shown again.'),
  name: z.string(),
  scopes: z.array(z.string()),
  createdAt: z.string(),
  revokedAt: z.string().nullable(),
});

export const CreatedKey = KeyView.extend({
  key: z.string().describe('The full key. Shown once, in this response only; store it now.'),
});

export const KeyList = z.object({ keys: z.array(KeyView) });

export const CreateKeyBody = z
  .object({
    name: z.string().max(200).optional().describe('A label for the key, e.g. the system that uses it.'),
    scopes: z.array(Scope).min(1).describe('read: GETs and queries; write: data, models, fits; admin: keys.'),
  })
  .strict();

export const KeyIdParams = z.object({ id: z.string().min(1).max(100) });

export const WorkspaceView = z.object({ id: z.string().uuid(), name: z.string(), createdAt: z.string() });
