// Package mapfile reads stipple map files: TOML documents that describe one
// map completely (inputs, categories, dot value, seed, zooms, output), so a
// desk can keep the file in version control and rerun it on deadline.
//
// Every problem is reported as "FILE:LINE: key KEY: message". Unknown keys
// are errors, not warnings: a misspelt key silently ignored is a map rendered
// wrong on deadline.
package mapfile
