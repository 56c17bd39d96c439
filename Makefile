# The two commands a newcomer needs: `make run` and `make test`.
.PHONY: run test build web bench survey check-rust browser-tests reference-checks clean

run: web
	node scripts/serve.mjs 8080

web:
	bash scripts/ensure-tools.sh web
	bash scripts/build-web.sh

test:
	@start=$$(date +%s); \
	bash scripts/ensure-tools.sh web browser python && \
	$(MAKE) --no-print-directory check-rust reference-checks web browser-tests && \
	echo "make test: all steps passed in $$(( $$(date +%s) - start )) s"

check-rust:
	cargo fmt --check
	cargo clippy --quiet --all-targets -- -D warnings
	cargo clippy --quiet --lib --target wasm32-unknown-unknown -- -D warnings
	cargo test --quiet

reference-checks:
	bash scripts/reference-checks.sh

browser-tests:
	node --test --test-concurrency=1 tests/browser/

bench:  # BASE=REV compares with commit REV in the same run
	BASE=$(BASE) bash scripts/bench.sh

survey:  # issue 17's hard cases, coverage and textbook sets: a table, not a test
	cargo run --quiet --release --example trust_survey

clean:
	rm -rf dist tests/browser/output
