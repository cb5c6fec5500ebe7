import { hash } from "@node-rs/argon2";
import { describe, expect, it } from "vitest";
import {
  ARGON2_OPTIONS,
  hashPassword,
  needsRehash,
  passwordProblem,
  verifyPassword,
} from "~/services/password.server";

describe("password hashing (argon2id)", () => {
  it("produces an argon2id PHC string with the configured cost", async () => {
    const h = await hashPassword("correct horse battery");
    // PHC format of RFC 9106 reference implementation: $argon2id$v=19$m=<KiB>,t=<passes>,p=<lanes>$<salt>$<hash>
    expect(h).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$[A-Za-z0-9+/]{22}\$[A-Za-z0-9+/]{43}$/);
    expect(ARGON2_OPTIONS.memoryCost).toBe(19456);
  });

  it("salts every hash: the same password hashes differently", async () => {
    const [a, b] = await Promise.all([hashPassword("same-password"), hashPassword("same-password")]);
    expect(a).not.toBe(b);
    expect(await verifyPassword(a, "same-password")).toBe(true);
    expect(await verifyPassword(b, "same-password")).toBe(true);
  });

  it("rejects a wrong password, a near miss and a malformed hash without throwing", async () => {
    const h = await hashPassword("engineer-demo-pass");
    expect(await verifyPassword(h, "engineer-demo-pas")).toBe(false);
    expect(await verifyPassword(h, "Engineer-demo-pass")).toBe(false);
    expect(await verifyPassword("not-a-hash", "engineer-demo-pass")).toBe(false);
    expect(await verifyPassword("", "")).toBe(false);
  });

  it("asks for a rehash when parameters are weaker than the current ones", async () => {
    const weak = await hash("pw-123456", { memoryCost: 4096, timeCost: 1, parallelism: 1 });
    expect(needsRehash(weak)).toBe(true);
    expect(needsRehash(await hashPassword("pw-123456"))).toBe(false);
    expect(needsRehash("$2b$10$abcdefghijklmnopqrstuv")).toBe(true); // bcrypt string: not ours
  });

  it("enforces the length rules on new passwords", () => {
    expect(passwordProblem("1234567")).toMatch(/at least 8/);
    expect(passwordProblem("12345678")).toBeNull();
    expect(passwordProblem("x".repeat(257))).toMatch(/at most 256/);
  });
});
