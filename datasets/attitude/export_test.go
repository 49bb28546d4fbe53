package attitude

// BROADRecording gives the external tests (which run the problem through
// the bench runner, and so cannot live in this package) the shared sample
// as broadRecording reads it: checksums checked, skipped when absent,
// failed under CI=true.
var BROADRecording = broadRecording
