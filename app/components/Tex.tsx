/**
 * TeX rendered with KaTeX on the server and the client alike (renderToString, so the page shows
 * the equations before hydration). A TeX error is shown as the source text, never thrown.
 */
import katex from "katex";
import "katex/dist/katex.min.css";

export function Tex({ tex, display = false, className }: { tex: string; display?: boolean; className?: string }) {
  const html = katex.renderToString(tex, { displayMode: display, throwOnError: false, strict: "ignore", output: "htmlAndMathml" });
  return <span className={className} data-tex={tex} dangerouslySetInnerHTML={{ __html: html }} />;
}
