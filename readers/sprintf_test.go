package readers

import "fmt"

func sprintf(f string, v float64) string { return fmt.Sprintf(f, v) }
