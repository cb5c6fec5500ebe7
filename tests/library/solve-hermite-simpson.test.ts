/** Every library problem solves with hermite-simpson at its default mesh (bounds and sources in library-suite.ts). */
import { librarySuite } from "./library-suite";

librarySuite("hermite-simpson");
