//go:build !unix

package integral

import "time"

// derivCPUTime is unavailable here; see deriv_cputime_unix_test.go.
func derivCPUTime() time.Duration { return 0 }
