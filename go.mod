module github.com/geored/geored

go 1.26

require (
	github.com/BurntSushi/toml v1.6.0
	github.com/golang/geo v0.0.0-20260818125358-b200a1149890
	github.com/stretchr/testify v1.12.1
	github.com/twpayne/go-proj/v10 v10.3.0
)

require go.yaml.in/yaml/v3 v3.0.5 // indirect
