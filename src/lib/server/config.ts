import { z } from 'zod';

/**
 * Every setting Fillcard reads from the environment, parsed once. Defaults point at the local
 * stand-ins that `npm start` runs; production sets real values. A bad value stops start-up with
 * its name, so a misconfigured deploy never half-works.
 */
const port = z.coerce.number().int().min(1).max(65535);
const url = z.string().url();

export const configSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  PUBLIC_ORIGIN: url.default('http://127.0.0.1:4321'),
  DATABASE_URL: z
    .string()
    .regex(/^postgres(ql)?:\/\//, 'must be a postgres:// URL')
    .default('postgres://postgres@127.0.0.1:55432/fillcard'),
  S3_ENDPOINT: url.default('http://127.0.0.1:9390'),
  /** The address browsers use for presigned URLs; the same as S3_ENDPOINT unless a proxy sits between. */
  S3_PUBLIC_ENDPOINT: url.optional(),
  S3_REGION: z.string().min(1).default('us-east-1'),
  S3_BUCKET: z.string().regex(/^[a-z0-9][a-z0-9.-]{1,61}[a-z0-9]$/, 'must be a valid bucket name').default('fillcard'),
  S3_ACCESS_KEY_ID: z.string().min(1).default('S3RVER'),
  S3_SECRET_ACCESS_KEY: z.string().min(1).default('S3RVER'),
  SMTP_HOST: z.string().min(1).default('127.0.0.1'),
  SMTP_PORT: port.default(1025),
  SMTP_SECURE: z.enum(['true', 'false']).default('false').transform((v) => v === 'true'),
  SMTP_USER: z.string().optional(),
  SMTP_PASSWORD: z.string().optional(),
  MAIL_FROM: z.string().min(3).default('Fillcard <no-reply@fillcard.test>'),
  STRIPE_SECRET_KEY: z.string().regex(/^sk_(test|live)_/, 'must start with sk_test_ or sk_live_').default('sk_test_fillcard_local'),
  STRIPE_WEBHOOK_SECRET: z.string().regex(/^whsec_/, 'must start with whsec_').default('whsec_fillcard_local_secret'),
  /** Set only for the local payment stand-in; unset means the real Stripe API. */
  STRIPE_API_BASE: url.optional(),
  /** Sign-in attempts allowed per network address in 15 minutes. */
  SIGN_IN_LIMIT_PER_ADDRESS: z.coerce.number().int().min(5).max(100_000).default(100),
  SESSION_COOKIE_SECURE: z.enum(['auto', 'true', 'false']).default('auto'),
});

export type Config = z.infer<typeof configSchema>;

export class ConfigError extends Error {}

export function parseConfig(env: Record<string, string | undefined>): Config {
  const result = configSchema.safeParse(env);
  if (!result.success) {
    const lines = result.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new ConfigError(`Fillcard cannot start: bad configuration\n${lines.join('\n')}`);
  }
  return result.data;
}

let cached: Config | undefined;

/** The validated configuration; the first call parses process.env and throws on a bad value. */
export function config(): Config {
  cached ??= parseConfig(process.env);
  return cached;
}

export const isProduction = () => config().NODE_ENV === 'production';
