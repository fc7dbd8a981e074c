/**
 * rediss:// (TLS) on a private redis-server that listens on a TLS port only, with a throw-away
 * self-signed certificate: a `darksieve worker` that trusts it (NODE_EXTRA_CA_CERTS, Node's own
 * mechanism) connects and leaves cleanly on SIGTERM; one that does not is refused at the probe with
 * exit 1 and a certificate message. Skips without redis-server or openssl.
 */
import { spawn, spawnSync } from 'node:child_process';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CLI, REPO, runCli, tempDir } from '../scan/helpers.js';
import { exited, freePort, haveRedisServer, killAll, waitFor } from './helpers.js';

const haveOpenssl = spawnSync('openssl', ['version'], { stdio: 'ignore' }).status === 0;

describe.skipIf(!haveRedisServer() || !haveOpenssl)('rediss:// (TLS)', () => {
  let tmp: ReturnType<typeof tempDir>;
  let server: ReturnType<typeof spawn>;
  let port: number;
  let cert: string;

  beforeAll(async () => {
    tmp = tempDir();
    cert = path.join(tmp.dir, 'cert.pem');
    const key = path.join(tmp.dir, 'key.pem');
    const made = spawnSync('openssl', ['req', '-x509', '-newkey', 'rsa:2048', '-nodes', '-keyout', key, '-out', cert, '-days', '1', '-subj', '/CN=localhost', '-addext', 'subjectAltName=DNS:localhost'], { stdio: 'ignore' });
    expect(made.status).toBe(0);
    port = await freePort();
    server = spawn('redis-server', ['--port', '0', '--tls-port', String(port), '--tls-cert-file', cert, '--tls-key-file', key, '--tls-ca-cert-file', cert, '--tls-auth-clients', 'no', '--bind', '127.0.0.1', '--save', '', '--appendonly', 'no'], { stdio: 'ignore' });
    await waitFor('the TLS redis-server', () => spawnSync('redis-cli', ['--tls', '--cacert', cert, '-p', String(port), 'ping']).stdout?.toString().includes('PONG'), 10_000);
  });
  afterAll(async () => {
    await killAll([server]);
    tmp.cleanup();
  });

  it('a worker that trusts the certificate connects over TLS and leaves on SIGTERM', async () => {
    const url = `rediss://localhost:${port}`;
    const worker = spawn(process.execPath, [CLI, 'worker', '--redis', url, '--concurrency', '1'], { cwd: REPO, env: { ...process.env, NODE_EXTRA_CA_CERTS: cert }, stdio: ['ignore', 'pipe', 'pipe'] });
    let out = '';
    worker.stderr.on('data', (d: Buffer) => (out += d.toString()));
    try {
      await waitFor('the worker to report ready', () => out.includes(`waiting for scans on ${url}`), 60_000);
      worker.kill('SIGTERM');
      await exited(worker);
      expect(worker.exitCode, out).toBe(0);
    } finally {
      await killAll([worker]);
    }
  }, 90_000);

  it('a worker that does not trust it is refused with exit 1 and the certificate named', async () => {
    const r = await runCli(['worker', '--redis', `rediss://localhost:${port}`], { env: { NODE_EXTRA_CA_CERTS: '' } });
    expect(r.code, r.stderr).toBe(1);
    expect(r.stderr).toMatch(/cannot reach Redis at rediss:\/\/localhost:\d+: .*certificate/i);
  }, 90_000);
});
