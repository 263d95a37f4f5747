//! The optimiser calls `Stage::error` and `Stage::electrical_ok` millions of times: they must not touch the
//! heap. A counting allocator proves it for every topology and both VBE models. It counts per thread, so
//! the test harness's own threads (output capture, the timer) cannot disturb the count.

use biasfit::stage::{parse, Slot, SlotValues};
use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;

struct Counting;

thread_local! {
    // A const-initialised Cell: reading or bumping it never allocates, so the allocator may use it.
    static ALLOCATIONS: Cell<usize> = const { Cell::new(0) };
}

/// Allocations made so far by the calling thread.
fn allocations() -> usize {
    ALLOCATIONS.with(|c| c.get())
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        // try_with: a thread being torn down has no counter left, and its allocations do not matter here.
        let _ = ALLOCATIONS.try_with(|c| c.set(c.get() + 1));
        unsafe { System.alloc(layout) }
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) }
    }
}

#[global_allocator]
static GLOBAL: Counting = Counting;

#[test]
fn error_and_electrical_ok_do_not_allocate() {
    let mut stages = Vec::new();
    for file in [
        "examples/sensor-preamp.toml",
        "examples/line-driver.toml",
        "examples/split-emitter.toml",
        "examples/pnp-stage.toml",
        "examples/two-stage.toml",
    ] {
        let path = format!("{}/{file}", env!("CARGO_MANIFEST_DIR"));
        let text = std::fs::read_to_string(path).unwrap();
        stages.extend(parse(file, &text).unwrap().stages);
    }
    let base = "[[stage]]\ntopology = \"base-resistor\"\nsupply = 12\nload = \"3k3\"\n[stage.transistor]\nbeta = [90, 150, 250]\nvbe = { volts = 0.62, at = \"1mA\" }\n";
    stages.extend(parse("b.toml", base).unwrap().stages);
    let cases: Vec<(usize, SlotValues)> = stages
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let mut v = s.ideal().unwrap().values;
            // Off the ideal, so the solve does real work.
            for slot in s.slots() {
                let r = v.get(slot).unwrap();
                v.set(slot, r * if slot == Slot::RC { 1.1 } else { 0.93 });
            }
            (i, v)
        })
        .collect();
    let mut sink = 0.0;
    let before = allocations();
    assert!(before > 0, "the counter sees the set-up's allocations");
    for (i, v) in &cases {
        for _ in 0..50 {
            sink += stages[*i].error(v);
            sink += f64::from(u8::from(stages[*i].electrical_ok(v)));
        }
    }
    let after = allocations();
    assert!(sink.is_finite());
    assert_eq!(after - before, 0, "error/electrical_ok allocated");
}
