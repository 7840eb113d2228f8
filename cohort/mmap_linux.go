package cohort

import "syscall"

// mapPopulate asks Linux to fault the mapping in at once.
const mapPopulate = syscall.MAP_POPULATE
