// The session's shape for the app's type check too: vue-tsc reaches the server's handlers through the typed
// routes of $fetch, and they read the session's User.
/// <reference path="../../server/types/auth-session.d.ts" />
export {}
