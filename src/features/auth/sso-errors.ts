/**
 * What the sign-in page says when the identity provider's round trip comes back refused
 * (/sign-in?error=<code>; the codes are better-auth's and the OpenID Connect error names).
 */
const WORDS: { codes: string[]; words: string }[] = [
  {
    codes: ["state_mismatch", "state_not_found", "invalid_state", "please_restart_the_process", "invalid_callback_request", "state_security_mismatch"],
    words:
      "This sign-in could not be matched to the one this browser started: it was changed on the way, started in another browser or tab, or took too long. Nobody was signed in. Start again with the button.",
  },
  {
    codes: ["issuer_mismatch", "issuer_missing"],
    words:
      "The answer did not come from the identity provider the sign-in was sent to. Nobody was signed in. Start again; if this happens again, tell the plant's IT department.",
  },
  {
    codes: ["invalid_code", "invalid_grant", "no_code"],
    words: "The identity provider's sign-in had expired (or was already used) when it reached Strandsight. Nobody was signed in. Start again with the button.",
  },
  {
    codes: ["unable_to_get_user_info", "email_not_found", "email_not_verified", "nonce_binding_missing"],
    words: "The identity provider did not confirm who you are (a signed identity with an e-mail address). Nobody was signed in. Ask the plant's IT department.",
  },
  {
    codes: ["access_denied", "login_required", "consent_required", "interaction_required"],
    words: "The sign-in was cancelled or refused at the identity provider. Nobody was signed in.",
  },
  {
    codes: ["account_not_linked", "unable_to_link_account", "account_already_linked_to_different_user", "signup_disabled", "banned"],
    words:
      "Your identity provider's account could not be matched to a Strandsight account (an account with this e-mail exists but belongs to someone else, or it has been deactivated). Ask an administrator.",
  },
];

export function ssoErrorWords(code: string): string {
  const known = WORDS.find((w) => w.codes.includes(code.toLowerCase()));
  return known
    ? known.words
    : `Signing in through the identity provider did not work (${code.slice(0, 60)}). Nobody was signed in. Start again, or ask the plant's IT department.`;
}
