// Command riskaudit audits clinical risk models for a yes/no outcome: it
// fits recipes into frozen models, scores cohorts and (in later commands)
// measures how a frozen model performs on a new cohort.
//
// Exit status: 0 success; 1 an audit ran and a criterion failed
// (reserved for audits); 2 wrong usage; 3 bad input (a data file or a
// model spec); 4 the model cannot be fitted (separation, collinear
// terms, no convergence); 5 any other failure, such as an output that
// cannot be written.
package main

import "os"

func main() {
	os.Exit(run(os.Args[1:], newStreams(os.Stdout, os.Stderr)))
}
