package cohort

import (
	"fmt"
	"strings"
)

// ParseDelimiter reads a delimiter as a command line or a plan names it:
// "comma", "semicolon", "tab" (or the characters themselves, or `\t`),
// or any other single byte but a quote or a line end. The empty name is
// 0: detect the delimiter from the header.
func ParseDelimiter(name string) (byte, error) {
	switch strings.ToLower(name) {
	case "":
		return 0, nil
	case "comma", ",":
		return ',', nil
	case "semicolon", ";":
		return ';', nil
	case "tab", `\t`, "\t":
		return '\t', nil
	}
	if len(name) != 1 || name == `"` || name == "\n" || name == "\r" {
		return 0, fmt.Errorf("%q: give comma, semicolon, tab or one character other than a quote or line end", name)
	}
	return name[0], nil
}
