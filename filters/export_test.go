package filters

// UnscentedTransform exposes unscentedTransform to the external tests.
var UnscentedTransform = unscentedTransform
