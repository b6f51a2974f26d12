package watch

// PoisonReleased lets the external tests overwrite released points
// (poisonReleased), to catch a consumer that kept a reference.
var PoisonReleased = &poisonReleased
