package kinmap

import "io"

// SetWrap makes every output writer of r's Save pass through wrap, for
// fault-injection tests.
func SetWrap(r *Result, wrap func(path string, w io.Writer) io.Writer) { r.wrap = wrap }
