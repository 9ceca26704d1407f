//go:build !linux

package main

import "os"

// peakRSS is unknown outside Linux (ru_maxrss differs in unit between
// systems); the table shows n/a.
func peakRSS(*os.ProcessState) int64 { return 0 }

// processCPUSeconds is unknown here.
func processCPUSeconds() float64 { return 0 }
