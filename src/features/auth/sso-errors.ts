/**
 * What the sign-in page says when the identity provider's round trip comes back refused
 * (/sign-in?error=<code>; the codes are better-auth's and the OpenID Connect error names): the key of
 * its words in the catalogue (common.json, ssoError.*).
 */
const KEYS: { codes: string[]; key: string }[] = [
  {
    codes: ["state_mismatch", "state_not_found", "invalid_state", "please_restart_the_process", "invalid_callback_request", "state_security_mismatch"],
    key: "ssoError.state",
  },
  { codes: ["issuer_mismatch", "issuer_missing"], key: "ssoError.issuer" },
  { codes: ["invalid_code", "invalid_grant", "no_code"], key: "ssoError.code" },
  { codes: ["unable_to_get_user_info", "email_not_found", "email_not_verified", "nonce_binding_missing"], key: "ssoError.identity" },
  { codes: ["access_denied", "login_required", "consent_required", "interaction_required"], key: "ssoError.cancelled" },
  { codes: ["account_not_linked", "unable_to_link_account", "account_already_linked_to_different_user", "signup_disabled", "banned"], key: "ssoError.account" },
];

export function ssoErrorKey(code: string): { key: string; code: string } {
  return { key: KEYS.find((w) => w.codes.includes(code.toLowerCase()))?.key ?? "ssoError.other", code: code.slice(0, 60) };
}
