// Node's command-line flags for the production server, in one place for `npm start` (package.json,
// checked by tests/unit/server-flags.test.ts), the demo, and the tests and benchmarks that start it.
//
// --max-semi-space-size=8: V8's young generation otherwise grows to two 16 MB halves during start-up
// and keeps them, which left the server 120–130 MB over the bare database with 50 live runs and 20
// dashboards; capped at 8 MB it is 65–85 MB over (tests/bench/memory, alternating runs). It can only
// be given at start-up, hence a flag rather than a setting in serve.js.
export const SERVER_NODE_FLAGS = ['--max-semi-space-size=8'];
