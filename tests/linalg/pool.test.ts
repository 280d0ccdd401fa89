import { describe, it, expect, afterAll } from "vitest";
import { WorkerPool, sharedFloat64 } from "../../src/linalg/pool.js";
import { failTask, fillRangeTask } from "../../src/linalg/pool-selftest.js";

describe("WorkerPool", () => {
  const pool = new WorkerPool(2);
  afterAll(() => pool.close());

  it("runs tasks in workers that write into shared memory", async () => {
    const a = sharedFloat64(1000);
    expect(await pool.map(fillRangeTask, [[a, 0, 500, 1.5], [a, 500, 1000, 2.5]])).toEqual([500, 500]);
    expect(a[0]).toBe(1.5);
    expect(a[499]).toBe(1.5);
    expect(a[500]).toBe(2.5);
    expect(a[999]).toBe(2.5);
  });

  it("passes task failures back as rejections", async () => {
    await expect(pool.run(failTask, 0, ["boom"])).rejects.toThrow(/boom/);
  });
});
