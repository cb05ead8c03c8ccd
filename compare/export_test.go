package compare

// ConstructedInput is constructedInput for the external tests.
var ConstructedInput = constructedInput
var Deref = deref
