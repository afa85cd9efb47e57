// Command trendsql keeps trend and dependence analysis of station readings
// next to the data: a pure-Go SQLite store with SQL functions for trend
// fitting, residuals, sample autocovariance and Ljung–Box.
package main

import "os"

func main() { os.Exit(Main(os.Args[1:], os.Stdin, os.Stdout, os.Stderr)) }
