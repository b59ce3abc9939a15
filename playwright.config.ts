import { defineConfig } from '@playwright/test';

// The app is built and started by `npm test` (src/ops/test.ts), which passes BASE_URL.
export default defineConfig({
	testDir: 'tests/e2e',
	fullyParallel: false,
	workers: 1,
	retries: 0,
	timeout: 60_000,
	reporter: [['list'], ['json']],
	use: {
		baseURL: process.env.BASE_URL ?? 'http://127.0.0.1:3000',
		screenshot: 'only-on-failure',
		launchOptions: {
			executablePath: '/usr/bin/chromium',
			args: ['--no-sandbox', '--disable-gpu', '--disable-quic', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run']
		}
	}
});
