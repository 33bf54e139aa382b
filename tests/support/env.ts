// Where the test app listens (set by docker-free-scripts/test.sh).
export const appPort = Number(process.env.TIEPOINT_TEST_APP_PORT ?? 3939)
export const smtpPort = Number(process.env.TIEPOINT_TEST_SMTP_PORT ?? appPort + 1000)
export const baseUrl = `http://127.0.0.1:${appPort}`
export const demoPassword = process.env.DEMO_PASSWORD || 'tiepoint-demo'
