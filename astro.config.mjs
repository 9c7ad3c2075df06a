// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwind from '@astrojs/tailwind';

export default defineConfig({
  output: 'server',
  adapter: node({ mode: 'standalone' }),
  integrations: [react(), tailwind({ applyBaseStyles: false })],
  // Astro refuses cross-site form posts (Origin header check); keep it on.
  security: { checkOrigin: true },
  server: { host: '127.0.0.1', port: Number(process.env.PORT ?? 4321) },
  vite: {
    ssr: { external: ['sharp', 'pg-boss', '@node-rs/argon2', 'knex', 'pg', 'nodemailer', 'archiver'] },
  },
});
