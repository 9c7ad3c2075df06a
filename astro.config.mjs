// @ts-check
import { defineConfig } from 'astro/config';
import node from '@astrojs/node';
import react from '@astrojs/react';
import tailwind from '@astrojs/tailwind';

// The hosts this app answers as. Astro builds request URLs (and its origin check) from the Host header
// only when it matches one of these; PUBLIC_ORIGIN at build time adds the production host.
const allowedDomains = [{ hostname: '127.0.0.1' }, { hostname: 'localhost' }];
if (process.env.PUBLIC_ORIGIN) {
  const { hostname } = new URL(process.env.PUBLIC_ORIGIN);
  if (!allowedDomains.some((d) => d.hostname === hostname)) allowedDomains.push({ hostname });
}

export default defineConfig({
  output: 'server',
  // A numbered test stack builds into its own folder, so stacks side by side never swap files under each other.
  outDir: process.env.FILLCARD_OUT_DIR ?? './dist',
  adapter: node({ mode: 'standalone' }),
  integrations: [react(), tailwind({ applyBaseStyles: false })],
  // Astro refuses cross-site form posts (Origin header check); keep it on.
  security: { checkOrigin: true, allowedDomains },
  // Astro hashes its own inline scripts into the page's script-src; src/middleware.ts adds the rest
  // of the policy at run time (the object store's address is configuration, not build input).
  experimental: { csp: true },
  build: { inlineStylesheets: 'never' },
  server: { host: '127.0.0.1', port: Number(process.env.PORT ?? 4321) },
  vite: {
    ssr: { external: ['sharp', 'pg-boss', '@node-rs/argon2', 'knex', 'pg', 'nodemailer', 'archiver'] },
  },
});
