// Package house holds no code, only tests of the repository's structure:
// the import arrows between our packages (imports_test.go), the cyclomatic
// complexity of every function (complexity_test.go) and the size and line
// length of the Markdown documents (docs_test.go). See DEVELOPERS.md.
package house
