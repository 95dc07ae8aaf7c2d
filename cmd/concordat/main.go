// Command concordat computes rank correlations declared in HCL recipes,
// writes the tables and appends a hashed provenance ledger.
//
//	concordat run RECIPE...      compute, write outputs, append to the ledger
//	concordat check RECIPE...    validate recipe and data headers, print the plan
//	concordat version
//
// Exit codes: 0 success; 1 a run failed (data error, I/O); 2 usage or recipe
// error.
package main

import "os"

func main() { os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }
