import { defineConfig } from 'drizzle-kit';

// Only used by `npm run db:generate`: it diffs the schema against drizzle/ and writes SQL.
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'postgresql'
});
