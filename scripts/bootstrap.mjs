// Entry point of `npm start` and `npm test`. Plain Node with no dependencies, because it is what
// installs them: on a fresh clone node_modules does not exist yet.
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, statSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = dirname(dirname(fileURLToPath(import.meta.url)));
const [command, ...rest] = process.argv.slice(2);
const scripts = { start: 'scripts/start.ts', test: 'scripts/test.ts' };

if (!(command in scripts)) {
	console.error(`usage: node scripts/bootstrap.mjs <${Object.keys(scripts).join('|')}> [args...]`);
	process.exit(2);
}

function dependenciesNeedInstall() {
	const marker = join(root, 'node_modules', '.package-lock.json');
	if (!existsSync(join(root, 'node_modules')) || !existsSync(marker)) return true;
	return statSync(join(root, 'package-lock.json')).mtimeMs > statSync(marker).mtimeMs;
}

if (dependenciesNeedInstall()) {
	console.log('phonotherm: installing dependencies with npm ci ...');
	const npm = process.platform === 'win32' ? 'npm.cmd' : 'npm';
	const result = spawnSync(npm, ['ci', '--no-audit', '--no-fund'], {
		cwd: root,
		stdio: ['ignore', 'inherit', 'inherit']
	});
	if (result.status !== 0) {
		console.error('phonotherm: npm ci failed; fix the error above and run the command again.');
		process.exit(result.status ?? 1);
	}
}

const tsx = join(root, 'node_modules', '.bin', 'tsx');
const child = spawn(tsx, [scripts[command], ...rest], { cwd: root, stdio: 'inherit' });

// A terminal's Ctrl-C reaches the whole process group anyway; forwarding covers `kill <pid>` and
// CI runners that signal only this process. The child decides how to shut down; we wait for it.
for (const signal of ['SIGINT', 'SIGTERM', 'SIGHUP']) {
	process.on(signal, () => {
		if (child.exitCode === null) child.kill(signal);
	});
}

child.on('error', (error) => {
	console.error(`phonotherm: could not run ${tsx}: ${error.message}`);
	process.exit(1);
});
child.on('exit', (code, signal) => {
	process.exit(code ?? (signal ? 128 + (signalNumbers[signal] ?? 1) : 1));
});

const signalNumbers = { SIGHUP: 1, SIGINT: 2, SIGTERM: 15, SIGKILL: 9 };
