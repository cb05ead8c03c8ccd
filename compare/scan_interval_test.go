package compare

// shiftInterval is the shift's interval as the audit reports it.
func shiftInterval(s *Shift) (lo, hi *float64) { return s.BootCILow, s.BootCIHigh }
