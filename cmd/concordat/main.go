// Command concordat computes rank correlations declared in HCL recipes,
// writes the tables and appends a hashed provenance ledger.
//
//	concordat run RECIPE...      compute, write outputs, append to the ledger
//	                             (--shard K/N: one part, for a job array)
//	concordat merge RECIPE       combine shard files into the tables and ledger
//	concordat check RECIPE...    validate recipe and data headers, print the plan
//	concordat verify RECIPE...   recompute without writing; compare with the ledger
//	concordat history RECIPE     the ledger, newest first, or as W3C PROV-JSON
//	concordat version
//
// Exit codes: 0 success; 1 a run failed (data error, I/O); 2 usage or recipe
// error; 3 verify found a difference, or a ledger fails its own check.
//
// For developers: CONCORDAT_CPUPROFILE=FILE writes a CPU profile of the
// whole command to FILE (go tool pprof reads it).
package main

import (
	"fmt"
	"os"
	"runtime/pprof"
)

func main() {
	path := os.Getenv("CONCORDAT_CPUPROFILE")
	if path == "" {
		os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
	}
	f, err := os.Create(path)
	if err == nil {
		err = pprof.StartCPUProfile(f)
	}
	if err != nil {
		fmt.Fprintf(os.Stderr, "concordat: error: CPU profile: %v\n", err)
		os.Exit(1)
	}
	code := run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)
	pprof.StopCPUProfile()
	if err := f.Close(); err != nil {
		fmt.Fprintf(os.Stderr, "concordat: error: CPU profile: %v\n", err)
		code = max(code, 1)
	}
	os.Exit(code)
}
