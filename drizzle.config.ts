import { defineConfig } from 'drizzle-kit';

// `npm run db:generate` writes SQL migrations to drizzle/ from src/db/schema.ts; they are committed and
// applied at start-up and by `endquench migrate`.
export default defineConfig({
  dialect: 'postgresql',
  schema: './src/db/schema.ts',
  out: './drizzle',
});
