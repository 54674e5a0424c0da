/**
 * "This browser has just signed out", for the sign-in page to say so. Kept in memory only: a
 * reload or a fresh visit to the sign-in page says nothing. Set by the sign-out (before the cache
 * forgets who was signed in), read by the signed-in frame (which then sends the page to sign in
 * without a way back) and by the sign-in page, which clears it once shown.
 */
let signedOut = false;

export const markSignedOut = () => {
  signedOut = true;
};
export const justSignedOut = () => signedOut;
export const clearSignedOut = () => {
  signedOut = false;
};
