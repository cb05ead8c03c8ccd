package compare

// Record is o as stored with a run (the JSON object of a run's options).
func (o Options) Record() any { return o.record() }
