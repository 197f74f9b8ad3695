# teeter: make run opens the simulator on the built-in demo; make test runs every test.
GO ?= go
BIN := bin/teeter
FUZZTIME ?= 5s

.PHONY: run test setup build bench fuzz clean

setup:
	@bash .ci/setup.sh

build: setup
	$(GO) build -o $(BIN) ./app

run: build
	./$(BIN)

# The whole suite: vet, every test, the race detector on the packages that
# hand data between goroutines, a short run of every fuzz target, and the
# real window under a virtual X server (the screenshot test).
test: setup
	$(GO) vet ./...
	$(GO) test ./...
	$(GO) test -race ./sim ./sim/live ./sim/sil ./control ./app/ui
	FUZZTIME=$(FUZZTIME) bash .ci/fuzz.sh
	TEETER_NEED_DISPLAY=1 xvfb-run -a -s "-screen 0 1600x1000x24" $(GO) test -count=1 -run Screenshot -v ./app

# Longer fuzzing by hand: make fuzz FUZZTIME=5m
fuzz: setup
	FUZZTIME=$(FUZZTIME) bash .ci/fuzz.sh

bench: setup
	$(GO) test -run '^$$' -bench . -benchtime 2s ./sim/...

clean:
	rm -rf bin
