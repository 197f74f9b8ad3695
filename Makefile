# teeter: make run opens the simulator on the built-in demo; make test runs every test.
GO ?= go
BIN := bin/teeter

.PHONY: run test setup build bench fuzz clean

setup:
	@bash .ci/setup.sh

build: setup
	$(GO) build -o $(BIN) ./app

run: build
	./$(BIN)

test: setup
	$(GO) vet ./...
	$(GO) test ./...

bench: setup
	$(GO) test -run '^$$' -bench . -benchtime 2s ./sim/...

clean:
	rm -rf bin
