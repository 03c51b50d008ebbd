import { defineConfig } from 'drizzle-kit';

// `npm run db:generate` writes a new migration into drizzle/ from schema.ts; commit it.
// generate needs no database; DATABASE_URL is only read by drizzle-kit's push/studio.
export default defineConfig({
	schema: './src/lib/server/db/schema.ts',
	out: './drizzle',
	dialect: 'mysql',
	casing: 'snake_case',
	dbCredentials: { url: process.env.DATABASE_URL ?? 'mysql://127.0.0.1:3407/shotwright' },
	strict: true,
	verbose: true
});
