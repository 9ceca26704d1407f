// Command poisebench times poise on fixed workloads (settle runs, single
// energies, gradient-to-energy ratios, the size scaling of the Fock build)
// and compares each with its goal. It runs every workload in a child
// process of itself, so that the peak memory reported is that workload's
// own. See the README section "Benchmarks".
//
//	go run ./cmd/poisebench                      # the cheap workloads
//	go run ./cmd/poisebench --all                # also the long ones
//	go run ./cmd/poisebench --workloads water-settle,alkane-exponent --repeat 3
//
// The exponent of the Fock build is the least-squares slope of log t
// against log N_bf (number of basis functions) over linear alkanes; the
// integral screening it measures follows Häser & Ahlrichs, J. Comput. Chem.
// 10, 104 (1989).
package main
