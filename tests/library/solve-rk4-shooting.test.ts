/** Every library problem solves with rk4-shooting at its default mesh (bounds and sources in library-suite.ts). */
import { librarySuite } from "./library-suite";

librarySuite("rk4-shooting");
