module github.com/stipple-maps/stipple

go 1.26.8

require (
	github.com/BurntSushi/toml v1.6.0 // indirect
	github.com/fogleman/gg v1.3.0 // indirect
	github.com/golang/freetype v0.0.0-20170609003504-e2365dfdc4a0 // indirect
	github.com/paulmach/orb v0.14.0 // indirect
	github.com/twpayne/go-geom v1.7.0 // indirect
	golang.org/x/image v0.48.0 // indirect
)
