# The two commands a newcomer needs: `make run` and `make test`.
.PHONY: run test build web bench survey check browser-tests reference-checks clean

run: web
	node scripts/serve.mjs 8080

web:
	bash scripts/ensure-tools.sh web
	bash scripts/build-web.sh

test:
	@start=$$(date +%s); \
	bash scripts/ensure-tools.sh web browser python && \
	$(MAKE) --no-print-directory check reference-checks web browser-tests && \
	echo "make test: all steps passed in $$(( $$(date +%s) - start )) s"

# The gates every commit keeps: formatting, clippy (native and wasm32, with the lint set in Cargo.toml's
# [lints]), rustdoc without warnings, and every test including the doc examples. Offline and without sudo.
check:
	@start=$$(date +%s); \
	cargo fmt --check && \
	cargo clippy --quiet --all-targets -- -D warnings && \
	cargo clippy --quiet --lib --target wasm32-unknown-unknown -- -D warnings && \
	RUSTDOCFLAGS="-D warnings" cargo doc --quiet --no-deps && \
	cargo test --quiet && \
	echo "make check: all gates passed in $$(( $$(date +%s) - start )) s"

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
