/**
 * The Content-Security-Policy nonce of the page being shown, for code that
 * adds its own <style> elements (CodeMirror: `EditorView.cspNonce`). Next.js
 * puts the nonce on every script it renders; browsers hide the attribute but
 * keep the `nonce` property readable to scripts. Undefined outside a browser
 * or on a page without a policy.
 */
export function pageNonce(): string | undefined {
  if (typeof document === "undefined") return undefined;
  const script = document.querySelector<HTMLScriptElement>("script[nonce]");
  return script?.nonce || undefined;
}
