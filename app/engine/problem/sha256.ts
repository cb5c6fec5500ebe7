/**
 * SHA-256 in plain TypeScript (FIPS 180-4, "Secure Hash Standard", NIST 2015, §6.2), so that
 * the problem compiler has no Node-only import and can also validate an upload in the browser.
 * Input: bytes; output: 64 lowercase hex digits. Used for problem versions only (not secrets).
 */

/** Round constants K_0..K_63: first 32 bits of the fractional parts of the cube roots of the first 64 primes (§4.2.2). */
const K = Uint32Array.from([
  0x428a2f98, 0x71374491, 0xb5c0fbcf, 0xe9b5dba5, 0x3956c25b, 0x59f111f1, 0x923f82a4, 0xab1c5ed5,
  0xd807aa98, 0x12835b01, 0x243185be, 0x550c7dc3, 0x72be5d74, 0x80deb1fe, 0x9bdc06a7, 0xc19bf174,
  0xe49b69c1, 0xefbe4786, 0x0fc19dc6, 0x240ca1cc, 0x2de92c6f, 0x4a7484aa, 0x5cb0a9dc, 0x76f988da,
  0x983e5152, 0xa831c66d, 0xb00327c8, 0xbf597fc7, 0xc6e00bf3, 0xd5a79147, 0x06ca6351, 0x14292967,
  0x27b70a85, 0x2e1b2138, 0x4d2c6dfc, 0x53380d13, 0x650a7354, 0x766a0abb, 0x81c2c92e, 0x92722c85,
  0xa2bfe8a1, 0xa81a664b, 0xc24b8b70, 0xc76c51a3, 0xd192e819, 0xd6990624, 0xf40e3585, 0x106aa070,
  0x19a4c116, 0x1e376c08, 0x2748774c, 0x34b0bcb5, 0x391c0cb3, 0x4ed8aa4a, 0x5b9cca4f, 0x682e6ff3,
  0x748f82ee, 0x78a5636f, 0x84c87814, 0x8cc70208, 0x90befffa, 0xa4506ceb, 0xbef9a3f7, 0xc67178f2,
]);

/** Initial hash H(0): first 32 bits of the fractional parts of the square roots of the first 8 primes (§5.3.3). */
const H0 = [0x6a09e667, 0xbb67ae85, 0x3c6ef372, 0xa54ff53a, 0x510e527f, 0x9b05688c, 0x1f83d9ab, 0x5be0cd19];

/** Incremental SHA-256: update() with byte chunks, then digestHex(). */
export class Sha256 {
  private readonly h = Uint32Array.from(H0);
  private readonly block = new Uint8Array(64);
  private readonly w = new Uint32Array(64);
  private used = 0;
  private bytes = 0;
  private done = false;

  update(data: Uint8Array | string): this {
    if (this.done) throw new Error("Sha256: update after digest");
    const d = typeof data === "string" ? new TextEncoder().encode(data) : data;
    this.bytes += d.length;
    for (let i = 0; i < d.length; i++) {
      this.block[this.used++] = d[i];
      if (this.used === 64) {
        this.compress();
        this.used = 0;
      }
    }
    return this;
  }

  digestHex(): string {
    if (!this.done) {
      // padding (§5.1.1): 0x80, zeros, 64-bit big-endian bit length
      const bitsHi = Math.floor((this.bytes * 8) / 2 ** 32);
      const bitsLo = (this.bytes * 8) >>> 0;
      this.block[this.used++] = 0x80;
      if (this.used > 56) {
        this.block.fill(0, this.used);
        this.compress();
        this.used = 0;
      }
      this.block.fill(0, this.used, 56);
      const v = new DataView(this.block.buffer);
      v.setUint32(56, bitsHi);
      v.setUint32(60, bitsLo);
      this.compress();
      this.done = true;
    }
    return Array.from(this.h, (x) => x.toString(16).padStart(8, "0")).join("");
  }

  /** One block of the compression function (§6.2.2). */
  private compress(): void {
    const w = this.w;
    const b = this.block;
    for (let t = 0; t < 16; t++) w[t] = (b[4 * t] << 24) | (b[4 * t + 1] << 16) | (b[4 * t + 2] << 8) | b[4 * t + 3];
    for (let t = 16; t < 64; t++) {
      const x = w[t - 15];
      const y = w[t - 2];
      const s0 = ((x >>> 7) | (x << 25)) ^ ((x >>> 18) | (x << 14)) ^ (x >>> 3);
      const s1 = ((y >>> 17) | (y << 15)) ^ ((y >>> 19) | (y << 13)) ^ (y >>> 10);
      w[t] = (w[t - 16] + s0 + w[t - 7] + s1) | 0;
    }
    const h = this.h;
    let a = h[0], bb = h[1], c = h[2], d = h[3], e = h[4], f = h[5], g = h[6], hh = h[7];
    for (let t = 0; t < 64; t++) {
      const S1 = ((e >>> 6) | (e << 26)) ^ ((e >>> 11) | (e << 21)) ^ ((e >>> 25) | (e << 7));
      const ch = (e & f) ^ (~e & g);
      const t1 = (hh + S1 + ch + K[t] + w[t]) | 0;
      const S0 = ((a >>> 2) | (a << 30)) ^ ((a >>> 13) | (a << 19)) ^ ((a >>> 22) | (a << 10));
      const maj = (a & bb) ^ (a & c) ^ (bb & c);
      const t2 = (S0 + maj) | 0;
      hh = g;
      g = f;
      f = e;
      e = (d + t1) | 0;
      d = c;
      c = bb;
      bb = a;
      a = (t1 + t2) | 0;
    }
    h[0] += a; h[1] += bb; h[2] += c; h[3] += d; h[4] += e; h[5] += f; h[6] += g; h[7] += hh;
  }
}

export function sha256Hex(data: Uint8Array | string): string {
  return new Sha256().update(data).digestHex();
}
