// npm run dev: the demo bootstrap, then Vite's dev server with hot reload.
import { main, parsePort, run } from './lib/common.mjs';
import { bootstrap } from './lib/bootstrap.mjs';
import path from 'node:path';
import { ROOT } from './lib/common.mjs';

await main(async () => {
	const port = parsePort(process.env.PORT, 'PORT', 5173);
	const env = await bootstrap({ mode: 'demo', appPort: port });
	process.exit(run(path.join(ROOT, 'node_modules', '.bin', 'vite'), ['dev', '--port', String(port), '--strictPort'], { env }));
});
