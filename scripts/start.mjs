// npm start: everything a new user needs, then the app on http://127.0.0.1:3000 (PORT overrides).
import { spawn } from 'node:child_process';
import { SetupError, main, parsePort, portInUse, sleep } from './lib/common.mjs';
import { bootstrap, build } from './lib/bootstrap.mjs';
import { DEMO_PASSWORD, DEMO_USERS } from './lib/demo-users.mjs';

await main(async () => {
	const port = parsePort(process.env.PORT, 'PORT', 3000);
	const portTaken = () =>
		new SetupError(`port ${port} on 127.0.0.1 is already in use (another Shotwright, or another program).`,
			`stop that program, or start on another port: PORT=3001 npm start`);
	if (await portInUse(port)) throw portTaken();
	const env = await bootstrap({ mode: 'demo', appPort: port });
	build(env);
	if (await portInUse(port)) throw portTaken();

	const app = spawn(process.execPath, ['build'], { env, stdio: 'inherit' });
	for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => app.kill(signal));
	app.on('exit', (code) => process.exit(code ?? 0));
	for (let i = 0; i < 100 && !(await portInUse(port)); i++) await sleep(100);

	const url = `http://127.0.0.1:${port}`;
	console.log(`\n  Shotwright is running at ${url}\n`);
	console.log('  Demo sign-ins (invented lab, password for all: ' + DEMO_PASSWORD + ')');
	for (const user of DEMO_USERS) console.log(`    ${user.role.padEnd(14)} ${user.email}`);
	console.log(`\n  Mail sent by the app is kept in .data/mail/demo (admins: Mail page).`);
	console.log('  Stop with Ctrl+C; the database keeps running (npm run db:stop stops it).\n');
});
