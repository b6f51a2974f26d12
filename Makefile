# Developer shortcuts; DEVELOPERS.md explains each. CI runs .ci/run.
GO ?= go
FUZZTIME ?= 60s

.PHONY: test race lint fuzz bench golden build

build:
	$(GO) build -o fitgap ./cmd/fitgap

test:
	$(GO) test ./...

race:
	$(GO) test -race ./...

lint:
	@test -z "$$(gofmt -l $$(git ls-files '*.go'))" || (gofmt -l $$(git ls-files '*.go'); exit 1)
	$(GO) vet ./...
	$(GO) test -run TestImportArrows ./cmd/fitgap

# Every fuzz target, one after the other, FUZZTIME each.
fuzz:
	@for pkg in $$($(GO) list ./...); do \
	  for t in $$($(GO) test -list '^Fuzz' $$pkg | grep '^Fuzz'); do \
	    echo "== $$pkg $$t"; $(GO) test -run '^$$' -fuzz "^$$t$$" -fuzztime $(FUZZTIME) $$pkg || exit 1; \
	  done; \
	done

bench:
	$(GO) test -run '^$$' -bench . -benchmem ./...

# Regenerate the golden files of the screen and the summaries.
golden:
	$(GO) test ./tui ./tui/chart ./report -update
