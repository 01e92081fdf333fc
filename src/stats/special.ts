/**
 * The special functions arrowaudit takes from @stdlib, in one module: the regularized incomplete
 * beta function (with its upper-tail option) and the complementary error function.
 *
 * Every use imports them from here, so the build can inline this one module's dependencies
 * (`scripts/bundleSpecial.mjs`, run by `npm run build`): @stdlib spreads each function over about
 * a hundred small packages, and resolving and compiling them took 130–150 ms of every command's
 * start-up (measured on the team's 2-core machines: `node -e "await import(...)"` 196 ms against
 * 60 ms for an empty script). The bundled file holds the same code; tests run on the sources.
 */
import betainc from "@stdlib/math-base-special-betainc";
import erfc from "@stdlib/math-base-special-erfc";

export { betainc, erfc };
