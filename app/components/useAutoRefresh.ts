import { useEffect } from "react";
import { useRevalidator } from "react-router";

/**
 * Re-runs the page's loaders every `everyMs` while the tab is visible (a page that shows work in
 * progress stays current without a reload). `everyMs` null: no refresh.
 */
export function useAutoRefresh(everyMs: number | null): void {
  const revalidator = useRevalidator();
  useEffect(() => {
    if (everyMs === null) return;
    const t = setInterval(() => {
      if (document.visibilityState === "visible" && revalidator.state === "idle") void revalidator.revalidate();
    }, everyMs);
    return () => clearInterval(t);
  }, [everyMs, revalidator]);
}
