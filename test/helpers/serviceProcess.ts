// The service as a child process (`node bin/endquench.js serve`) on a free loopback port, for fault tests
// that kill it or cut its database. Every child started here is killed by stopAllServices().
import { spawn, type ChildProcess } from 'node:child_process';
import { createServer } from 'node:net';

export interface ServiceProcess {
  url: string;
  child: ChildProcess;
  /** stdout + stderr so far (pino JSON lines). */
  output(): string;
  /** Resolves with the exit code (null when killed by a signal). */
  exited: Promise<number | null>;
  alive(): boolean;
  kill(signal?: NodeJS.Signals): Promise<void>;
}

const started = new Set<ServiceProcess>();
// A test process that ends (a timeout, a failed hook) takes its services with it.
process.once('exit', () => {
  for (const s of started) if (s.alive()) s.child.kill('SIGKILL');
});

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const s = createServer();
    s.once('error', reject);
    s.listen(0, '127.0.0.1', () => {
      const port = (s.address() as { port: number }).port;
      s.close(() => resolve(port));
    });
  });
}

/** Starts `serve` with the given environment (DATABASE_URL or ENDQUENCH_DATA_DIR) and waits for /healthz. */
export async function startServiceProcess(env: Record<string, string>, readyWithinMs = 60_000): Promise<ServiceProcess> {
  const port = await freePort();
  const base: NodeJS.ProcessEnv = { ...process.env };
  delete base.DATABASE_URL;
  delete base.ENDQUENCH_DATA_DIR;
  const child = spawn(process.execPath, ['bin/endquench.js', 'serve'], {
    env: { ...base, PORT: String(port), HOST: '127.0.0.1', ENDQUENCH_DEMO: 'off', LOG_LEVEL: 'warn', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let output = '';
  child.stdout!.on('data', (c: Buffer) => (output += c.toString()));
  child.stderr!.on('data', (c: Buffer) => (output += c.toString()));
  const exited = new Promise<number | null>((resolve) => child.on('exit', (code) => resolve(code)));
  let done = false;
  void exited.then(() => (done = true));
  const service: ServiceProcess = {
    url: `http://127.0.0.1:${port}`,
    child,
    output: () => output,
    exited,
    alive: () => !done,
    kill: async (signal = 'SIGKILL') => {
      if (!done) child.kill(signal);
      await exited;
      started.delete(service);
    },
  };
  started.add(service);
  const deadline = Date.now() + readyWithinMs;
  for (;;) {
    if (done) throw new Error(`the service exited before answering:\n${output}`);
    try {
      const r = await fetch(`${service.url}/healthz`);
      if (r.status === 200) return service;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) {
      await service.kill();
      throw new Error(`the service did not answer /healthz within ${readyWithinMs} ms:\n${output}`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}

export async function stopAllServices(): Promise<void> {
  for (const s of [...started]) await s.kill('SIGKILL');
}
