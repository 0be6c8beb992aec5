package flow

import "strconv"

func trimFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
