/** The part of autocannon's API bench/http.ts uses (the package ships no types; @types is not installed). */
declare module 'autocannon' {
  interface Options {
    url: string;
    method?: string;
    headers?: Record<string, string>;
    body?: string | Buffer;
    connections?: number;
    duration?: number;
    amount?: number;
    timeout?: number;
  }
  interface Histogram {
    p50: number;
    p99: number;
    average: number;
  }
  interface Result {
    requests: Histogram & { total: number };
    latency: Histogram;
    throughput: Histogram & { total: number };
    duration: number;
    errors: number;
    timeouts: number;
    non2xx: number;
  }
  function autocannon(options: Options): Promise<Result>;
  export default autocannon;
}
