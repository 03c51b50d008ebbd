// npm run db:start | db:stop | db:status — Shotwright's private MariaDB.
import { ensureDependencies, main } from './lib/common.mjs';
import { ensureServer, privateServer, stopPrivateServer } from './lib/db.mjs';

await main(async () => {
	const command = process.argv[2];
	if (command === 'stop') return stopPrivateServer();
	ensureDependencies();
	if (command === 'start') {
		const url = await ensureServer();
		console.log(`MariaDB is answering at ${new URL(url).host}.`);
		return;
	}
	if (command === 'status') {
		const cfg = privateServer();
		console.log(`port ${cfg.port}, data ${cfg.dataDir}, socket ${cfg.socket}`);
		return;
	}
	throw new Error('usage: node scripts/db.mjs start|stop|status');
});
