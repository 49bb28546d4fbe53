GO ?= go

.PHONY: run test build bench fuzz

# The main job: the built-in default suite.
run:
	$(GO) run -buildvcs=auto ./bench/cmd/estbench run

# The tests: go vet and go test over every package.
test:
	$(GO) vet ./...
	$(GO) test ./...

build:
	$(GO) build -buildvcs=auto -o bin/estbench ./bench/cmd/estbench

# Per-step benchmarks of every filter on every problem.
bench:
	$(GO) test -run '^$$' -bench . -benchtime 2s ./filters/ ./bench/

# Each fuzz target briefly.
fuzz:
	$(GO) test -run '^$$' -fuzz FuzzParseSuite -fuzztime 20s ./bench/
