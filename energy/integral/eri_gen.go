package integral

// eriGenTable holds the straight-line code per canonical class.
var eriGenTable [eriNumClass]eriGenFunc
