module gyrebench

go 1.26.8

require (
	github.com/a-h/templ v0.3.1100 // indirect
	github.com/coder/websocket v1.8.15 // indirect
	github.com/go-chi/chi/v5 v5.5.0 // indirect
	github.com/pelletier/go-toml/v2 v2.4.3 // indirect
	gonum.org/v1/gonum v0.17.0 // indirect
)
