// Package examples embeds the example networks shipped with ramify, so that
// the command line can run them with no file on disk (ramify demo). Each file
// is an invented scenario; its comments say what it models and in what units.
package examples

import "embed"

// Files holds every *.toml file of this directory.
//
//go:embed *.toml
var Files embed.FS
