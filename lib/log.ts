import 'server-only';
import pino from 'pino';

/** The process logger (JSON lines on stdout); request ids tie log lines to error answers. */
export const logger = pino({ level: process.env.LOG_LEVEL ?? (process.env.NODE_ENV === 'test' ? 'warn' : 'info'), base: { app: 'excursion' } });
