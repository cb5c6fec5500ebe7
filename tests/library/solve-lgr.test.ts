/** Every library problem solves with lgr at its default mesh (bounds and sources in library-suite.ts). */
import { librarySuite } from "./library-suite";

librarySuite("lgr");
