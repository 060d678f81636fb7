/** The headers every dashboard answer carries: nothing inline may run, nothing may frame the page or guess a type. */
export const SECURITY_HEADERS: Readonly<Record<string, string>> = {
  // scripts and styles only from this server's files: no inline script, no style attribute in the markup
  'content-security-policy': "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; connect-src 'self'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'",
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'no-referrer',
  'x-frame-options': 'DENY',
  'cross-origin-opener-policy': 'same-origin',
  'cross-origin-resource-policy': 'same-origin',
};
