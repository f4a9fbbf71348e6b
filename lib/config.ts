import 'server-only';

/** Reads a required setting from the environment; secrets never come from files in the repository. */
function required(name: string): string {
  const v = process.env[name];
  if (!v) throw new Error(`The environment variable ${name} is not set.`);
  return v;
}

/** Settings read from the environment at call time (the bootstrap script fills them for local runs). */
export const config = {
  db: () => ({
    host: process.env.DB_HOST ?? '127.0.0.1',
    port: Number(process.env.DB_PORT ?? 3307),
    database: process.env.DB_NAME ?? 'excursion',
    username: required('DB_USER'),
    password: process.env.DB_PASSWORD ?? '',
  }),
  authSecret: () => required('NEXTAUTH_SECRET'),
  baseUrl: () => process.env.APP_BASE_URL ?? process.env.NEXTAUTH_URL ?? 'http://127.0.0.1:3000',
  secureCookies: () => (process.env.NEXTAUTH_URL ?? '').startsWith('https://'),
  smtp: () => ({
    host: process.env.SMTP_HOST ?? '127.0.0.1',
    port: Number(process.env.SMTP_PORT ?? 2525),
    secure: process.env.SMTP_SECURE === 'true',
    user: process.env.SMTP_USER,
    pass: process.env.SMTP_PASS,
    from: process.env.MAIL_FROM ?? 'Excursion <no-reply@excursion.invalid>',
  }),
  /** Only set for the local SMTP fake: enables the development mail page. */
  mailCaptureDir: () => process.env.MAIL_CAPTURE_DIR || null,
};
