// The one global outside the language that shared/ reads: a monotonic clock, present in
// browsers and in Node.js alike (HTML Living Standard, High Resolution Time; Node.js perf_hooks).
interface Performance {
  now(): number;
}
declare const performance: Performance | undefined;
