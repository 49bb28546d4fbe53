GO ?= go
# Stamp the VCS revision into the manifest when building from a git checkout.
BUILDVCS := $(shell git rev-parse --is-inside-work-tree >/dev/null 2>&1 && echo true || echo false)

.PHONY: run test build bench fuzz

# The main job: the built-in default suite.
run:
	$(GO) run -buildvcs=$(BUILDVCS) ./bench/cmd/estbench run

# The tests: go vet and go test over every package.
test:
	$(GO) vet ./...
	$(GO) test ./...

build:
	$(GO) build -buildvcs=$(BUILDVCS) -o bin/estbench ./bench/cmd/estbench

# Per-step benchmarks of every filter on every problem.
bench:
	$(GO) test -run '^$$' -bench . -benchtime 2s ./filters/ ./bench/

# Each fuzz target briefly. Minimisation is off: when -fuzztime ends during a
# minimisation the go command reports "context deadline exceeded" as a failure.
fuzz:
	$(GO) test -run '^$$' -fuzz FuzzParseSuite -fuzztime 20s ./bench/
	$(GO) test -run '^$$' -fuzz '^FuzzNMEA$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/navlog/
	$(GO) test -run '^$$' -fuzz '^FuzzAIS$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/navlog/
	$(GO) test -run '^$$' -fuzz '^FuzzGPX$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/navlog/
	$(GO) test -run '^$$' -fuzz '^FuzzAISCSV$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/navlog/
	$(GO) test -run '^$$' -fuzz '^FuzzCSV$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
	$(GO) test -run '^$$' -fuzz '^FuzzASL$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
	$(GO) test -run '^$$' -fuzz '^FuzzSmartphone$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
	$(GO) test -run '^$$' -fuzz '^FuzzMapping$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
	$(GO) test -run '^$$' -fuzz '^FuzzDecode$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
	$(GO) test -run '^$$' -fuzz '^FuzzParseFloat$$' -fuzztime 10s -fuzzminimizetime 0 ./datasets/recorded/
