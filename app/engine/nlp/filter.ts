/**
 * The filter F ⊂ {(θ, φ)} of W&B 2006 §2.3. A trial point is unacceptable when some entry
 * dominates it: θ ≥ θ_l and φ ≥ φ_l (the margins of eq. (18) are stored in the entries, as in
 * the augmentation rule (22): F ← F ∪ {((1−γ_θ)θ_k, φ_k − γ_φ θ_k)}). Initialised with
 * {(θ_max, −∞)} (step A-1), reset when μ changes (step A-3).
 */
export class Filter {
  private theta: number[] = [];
  private phi: number[] = [];

  reset(thetaMax: number): void {
    this.theta = [thetaMax];
    this.phi = [-Infinity];
  }

  isAcceptable(theta: number, phi: number): boolean {
    for (let l = 0; l < this.theta.length; l++) if (theta >= this.theta[l] && phi >= this.phi[l]) return false;
    return true;
  }

  /** Add (θ, φ) as given (margins already applied) and drop entries it dominates. */
  add(theta: number, phi: number): void {
    const t: number[] = [], p: number[] = [];
    for (let l = 0; l < this.theta.length; l++) {
      if (!(this.theta[l] >= theta && this.phi[l] >= phi)) { t.push(this.theta[l]); p.push(this.phi[l]); }
    }
    t.push(theta);
    p.push(phi);
    this.theta = t;
    this.phi = p;
  }

  get size(): number {
    return this.theta.length;
  }
}
