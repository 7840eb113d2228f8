//go:build darwin || freebsd || netbsd || openbsd

package cohort

const mapPopulate = 0
