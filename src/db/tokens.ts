// API tokens: only the SHA-256 of each secret is stored; the secret itself is returned once, at creation.
import { and, asc, eq, inArray, isNull, ne, sql } from 'drizzle-orm';
import type { Db, Executor } from './connection.ts';
import { apiTokens, heats, mills } from './schema.ts';
import { generateTokenSecret, hashTokenSecret } from '../auth/tokens.ts';
import type { Role } from '../api/context.ts';

export class TokenInputError extends Error {}

export interface TokenView {
  id: number;
  name: string;
  role: Role;
  mill: string | null;
  createdAt: string;
  revokedAt: string | null;
  lastUsedAt: string | null;
}

export interface CreateTokenInput {
  name: string;
  role: Role;
  /** Mill code; required for (and only for) the mill role. */
  mill?: string | null;
}

/** Creates a token and returns its secret (never stored, never shown again). */
export async function createToken(db: Db, input: CreateTokenInput): Promise<{ token: TokenView; secret: string }> {
  const name = input.name.trim();
  if (!name) throw new TokenInputError('a token needs a name');
  if (input.role === 'mill' && !input.mill) throw new TokenInputError('a mill token needs --mill <code>');
  if (input.role !== 'mill' && input.mill) throw new TokenInputError(`only a mill token takes a mill; a ${input.role} token sees every mill`);
  let millId: number | null = null;
  if (input.mill) {
    const [mill] = await db.select({ id: mills.id }).from(mills).where(eq(mills.code, input.mill));
    if (!mill) throw new TokenInputError(`mill ${input.mill} is not on file`);
    millId = mill.id;
  }
  const secret = generateTokenSecret();
  const [row] = await db.insert(apiTokens).values({ name, role: input.role, millId, secretHash: hashTokenSecret(secret) }).returning({ id: apiTokens.id });
  const token = (await listTokens(db)).find((t) => t.id === row.id)!;
  return { token, secret };
}

export async function listTokens(db: Db): Promise<TokenView[]> {
  const rows = await db
    .select({ t: apiTokens, mill: mills.code })
    .from(apiTokens)
    .leftJoin(mills, eq(mills.id, apiTokens.millId))
    .orderBy(asc(apiTokens.id));
  return rows.map(({ t, mill }) => ({
    id: t.id,
    name: t.name,
    role: t.role as Role,
    mill,
    createdAt: t.createdAt.toISOString(),
    revokedAt: t.revokedAt?.toISOString() ?? null,
    lastUsedAt: t.lastUsedAt?.toISOString() ?? null,
  }));
}

/** Revokes a token; false when there is no such token or it was already revoked. */
export async function revokeToken(db: Db, id: number): Promise<boolean> {
  const rows = await db
    .update(apiTokens)
    .set({ revokedAt: sql`now()` })
    .where(and(eq(apiTokens.id, id), isNull(apiTokens.revokedAt)))
    .returning({ id: apiTokens.id });
  return rows.length > 0;
}

export interface ActiveToken {
  id: number;
  name: string;
  role: Role;
  mill: string | null;
}

/** The unrevoked token with this digest, if any. */
export async function findActiveToken(ex: Executor, secretHash: string): Promise<ActiveToken | null> {
  const [row] = await ex
    .select({ id: apiTokens.id, name: apiTokens.name, role: apiTokens.role, mill: mills.code })
    .from(apiTokens)
    .leftJoin(mills, eq(mills.id, apiTokens.millId))
    .where(and(eq(apiTokens.secretHash, secretHash), isNull(apiTokens.revokedAt)));
  return row ? { ...row, role: row.role as Role } : null;
}

/** Records use, at most once a minute per token (so reads do not turn into a write each). */
export async function touchToken(ex: Executor, id: number): Promise<void> {
  await ex
    .update(apiTokens)
    .set({ lastUsedAt: sql`now()` })
    .where(and(eq(apiTokens.id, id), sql`(${apiTokens.lastUsedAt} is null or ${apiTokens.lastUsedAt} < now() - interval '1 minute')`));
}

/** Whether any unrevoked token exists (without one the service is open to local callers only). */
export async function hasActiveTokens(ex: Executor): Promise<boolean> {
  const [row] = await ex.select({ id: apiTokens.id }).from(apiTokens).where(isNull(apiTokens.revokedAt)).limit(1);
  return Boolean(row);
}

/** Of these heats, the ids that do not belong to the mill with this code. */
export async function heatsOutsideMill(ex: Executor, heatIds: number[], millCode: string): Promise<number[]> {
  if (heatIds.length === 0) return [];
  const rows = await ex
    .select({ id: heats.id })
    .from(heats)
    .innerJoin(mills, eq(mills.id, heats.millId))
    .where(and(inArray(heats.id, heatIds), ne(mills.code, millCode)));
  return rows.map((r) => r.id);
}
