// A tiny static server for dist/site/ on the loopback interface only, sending
// the headers a host should send (README.md, "Hosting the site").
// `node scripts/serve.mjs [port]`; also imported by the browser tests.
import { createServer } from 'node:http';
import { readFile } from 'node:fs/promises';
import { extname, join, normalize, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';

const TYPES = { '.html': 'text/html; charset=utf-8', '.js': 'text/javascript; charset=utf-8', '.css': 'text/css; charset=utf-8', '.wasm': 'application/wasm', '.svg': 'image/svg+xml', '.json': 'application/json' };

/**
 * The headers README.md ("Hosting the site") asks a host to send with every
 * file: the policy of the page's own meta tag, no framing, no type sniffing,
 * no referrer.
 */
export async function hostHeaders(root) {
  const html = await readFile(join(root, 'index.html'), 'utf8').catch(() => '');
  const csp = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html);
  return {
    ...(csp ? { 'Content-Security-Policy': csp[1] } : {}),
    'X-Frame-Options': 'DENY',
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'no-referrer',
  };
}

export function serve(root, port = 8080) {
  const base = resolve(root);
  const server = createServer(async (req, res) => {
    const path = normalize(decodeURIComponent(new URL(req.url, 'http://x').pathname)).replace(/^(\.\.[/\\])+/, '');
    const file = join(base, path.endsWith('/') ? `${path}index.html` : path);
    const headers = await hostHeaders(base);
    if (!file.startsWith(base)) { res.writeHead(403, headers).end(); return; }
    try {
      const body = await readFile(file);
      res.writeHead(200, { ...headers, 'Content-Type': TYPES[extname(file)] || 'application/octet-stream', 'Cache-Control': 'no-cache' });
      res.end(body);
    } catch {
      res.writeHead(404, { ...headers, 'Content-Type': 'text/plain' }).end('not found');
    }
  });
  return new Promise((ok, fail) => {
    server.once('error', fail);
    server.listen(port, '127.0.0.1', () => ok(server));
  });
}

if (process.argv[1] && resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  const port = Number(process.argv[2] || 8080);
  await serve('dist/site', port);
  console.log(`ddlens is served at  http://127.0.0.1:${port}/`);
  console.log(`the single file is   ${resolve('dist/ddlens.html')}`);
  console.log('(Ctrl-C stops the server)');
}
