// An error a feature reports to the user (an invalid new name for rename, say): the server answers
// it as a failed request with this message, and does not log it as a crash.
export class FeatureError extends Error {}
