import { ConnectionError, TimeoutError } from 'sequelize';

const CONNECTION_CODES = new Set([
  'ECONNREFUSED', 'ECONNRESET', 'EPIPE', 'ETIMEDOUT', 'EHOSTUNREACH', 'PROTOCOL_CONNECTION_LOST',
  'ER_SOCKET_UNEXPECTED_CLOSE', 'ER_CONNECTION_TIMEOUT', 'ER_GET_CONNECTION_TIMEOUT', 'ER_CMD_CONNECTION_CLOSED',
  'ER_CONNECTION_ALREADY_CLOSED', 'ER_SERVER_SHUTDOWN', 'ER_POOL_ALREADY_CLOSED', 'ER_ADD_CONNECTION_CLOSED_POOL',
  // The server stopped answering mid-query (hung or frozen): the driver gives up on the socket after socketTimeout.
  'ER_SOCKET_TIMEOUT', 'ER_SOCKET',
]);

/** True when the error means MariaDB could not be reached (answered 503), not that a query was wrong. */
export function isDbUnavailable(err: unknown): boolean {
  if (err instanceof ConnectionError || err instanceof TimeoutError) return true;
  let e: unknown = err;
  for (let depth = 0; e && depth < 4; depth++) {
    const code = (e as { code?: string }).code;
    if (code && CONNECTION_CODES.has(code)) return true;
    // MariaDB 1053: server shutdown in progress; 2006/2013: gone away / lost connection; driver 45009 socket closed,
    // 45019 socket error, 45026 socket timeout, 45028 no connection within the pool's wait.
    const errno = (e as { errno?: number }).errno;
    if (errno === 1053 || errno === 2006 || errno === 2013 || errno === 45009 || errno === 45019 || errno === 45026 || errno === 45028) return true;
    e = (e as { original?: unknown; parent?: unknown; cause?: unknown }).original ?? (e as { parent?: unknown }).parent ?? (e as { cause?: unknown }).cause;
  }
  return false;
}
