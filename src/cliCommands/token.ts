// `endquench token create|list|revoke`: API tokens. The secret is printed once, at creation.
import { Command, InvalidArgumentError } from 'commander';
import { loadConfig } from '../config.ts';
import { openDatabase, type Database } from '../db/connection.ts';
import { createToken, listTokens, revokeToken, TokenInputError } from '../db/tokens.ts';
import { isRole, type Role } from '../auth/policy.ts';

const roleOption = (value: string): Role => {
  if (isRole(value)) return value;
  throw new InvalidArgumentError('must be viewer, engineer, admin or mill');
};

const idArgument = (value: string): number => {
  const n = Number(value);
  if (!Number.isInteger(n) || n <= 0) throw new InvalidArgumentError('must be a token id (a positive whole number)');
  return n;
};

async function withDatabase<T>(work: (database: Database) => Promise<T>): Promise<T> {
  const config = loadConfig();
  const database = await openDatabase({ url: config.databaseUrl, dataDir: config.dataDir });
  try {
    await database.migrate();
    return await work(database);
  } finally {
    await database.close();
  }
}

export function register(program: Command): void {
  const token = program.command('token').description('API tokens (bearer tokens, stored hashed): create, list, revoke');

  token
    .command('create')
    .description('create a token and print its secret (shown this once only)')
    .requiredOption('--role <role>', 'viewer, engineer, admin or mill', roleOption)
    .option('--mill <code>', 'the mill a mill token is limited to')
    .option('--name <name>', 'who or what uses it (default: the role, or mill-<code>)')
    .option('--json', 'print the token and secret as JSON')
    .action(async (opts: { role: Role; mill?: string; name?: string; json?: boolean }) => {
      const name = opts.name ?? (opts.mill ? `mill-${opts.mill}` : opts.role);
      try {
        const { token: created, secret } = await withDatabase(({ db }) => createToken(db, { name, role: opts.role, mill: opts.mill }));
        if (opts.json) console.log(JSON.stringify({ ...created, secret }, null, 2));
        else {
          console.log(`Token ${created.id} "${created.name}" (${created.role}${created.mill ? `, mill ${created.mill}` : ''}) created.`);
          console.log(`Secret (shown once; send it as "Authorization: Bearer <secret>"):\n${secret}`);
        }
      } catch (error) {
        if (error instanceof TokenInputError) {
          console.error(`endquench token create: ${error.message}`);
          process.exitCode = 1;
          return;
        }
        throw error;
      }
    });

  token
    .command('list')
    .description('list tokens (never their secrets)')
    .option('--json', 'print JSON')
    .action(async (opts: { json?: boolean }) => {
      const tokens = await withDatabase(({ db }) => listTokens(db));
      if (opts.json) {
        console.log(JSON.stringify(tokens, null, 2));
        return;
      }
      if (tokens.length === 0) {
        console.log('No tokens. Without one the service answers requests from this machine only.');
        return;
      }
      for (const t of tokens) {
        const state = t.revokedAt ? `revoked ${t.revokedAt}` : t.lastUsedAt ? `last used ${t.lastUsedAt}` : 'never used';
        console.log(`${String(t.id).padStart(4)}  ${t.name.padEnd(24)} ${t.role.padEnd(9)} ${(t.mill ?? '').padEnd(12)} created ${t.createdAt}, ${state}`);
      }
    });

  token
    .command('revoke')
    .description('revoke a token (it stops working at once)')
    .argument('<id>', 'token id (see token list)', idArgument)
    .action(async (id: number) => {
      const revoked = await withDatabase(({ db }) => revokeToken(db, id));
      if (revoked) console.log(`Token ${id} revoked.`);
      else {
        console.error(`endquench token revoke: no active token ${id}`);
        process.exitCode = 1;
      }
    });
}
