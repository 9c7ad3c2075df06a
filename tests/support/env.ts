/** Addresses of the running app and stand-ins, as set by scripts/test.ts. */
export const APP = process.env.PUBLIC_ORIGIN ?? 'http://127.0.0.1:4331';
export const MAILDEV = process.env.MAILDEV_URL ?? 'http://127.0.0.1:1081';
export const PAYMENTS = process.env.STRIPE_API_BASE ?? 'http://127.0.0.1:12112';
export const ARTIFACTS = process.env.FILLCARD_ARTIFACTS ?? 'tests/.artifacts';
