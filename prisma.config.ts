import { defineConfig } from 'prisma/config';

// `prisma generate` needs no database: fall back to a placeholder so a fresh
// clone can generate the client before any server exists.
export default defineConfig({
  schema: 'prisma/schema.prisma',
  migrations: { path: 'prisma/migrations' },
  datasource: { url: process.env.DATABASE_URL ?? 'postgresql://placeholder@localhost:5432/placeholder' },
});
