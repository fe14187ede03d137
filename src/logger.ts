// Structured logs (pino): JSON lines, one per event, at the level LOG_LEVEL sets.
import pino from 'pino';

export type Logger = pino.Logger;

export function createLogger(level: string = process.env.LOG_LEVEL ?? 'info'): Logger {
  return pino({ level, base: { service: 'endquench' } });
}
