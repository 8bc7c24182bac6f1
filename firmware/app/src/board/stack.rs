//! The stack's high-water mark: free RAM painted with a pattern at start,
//! the depth reached read back as the first word no longer holding it.
//! Uses the symbols of cortex-m-rt's linker script (`__sheap`,
//! `_stack_start`), so it fits every board linked with it.

/// Where RAM starts (`memory.x`: the same on every board here).
const RAM_START: usize = 0x2000_0000;

/// The stack's fill pattern, for its high-water mark.
const PAINT: u32 = 0xA5A5_A5A5;

extern "C" {
    static mut __sheap: u32;
    static _stack_start: u32;
}

/// Fills the free RAM between the statics and the stack pointer with a
/// pattern (call first thing in `main`).
pub fn paint_stack() {
    let sp = cortex_m::register::msp::read() as usize;
    // SAFETY: the words between the end of the statics and 64 bytes below
    // the stack pointer are unused at this point.
    unsafe {
        let mut p = core::ptr::addr_of_mut!(__sheap);
        while (p as usize) + 64 < sp {
            core::ptr::write_volatile(p, PAINT);
            p = p.add(1);
        }
    }
}

/// Bytes of stack ever used: from the top down to the first word still
/// holding the pattern.
pub fn stack_used() -> usize {
    // SAFETY: reads of RAM between the statics and the stack top.
    unsafe {
        let top = core::ptr::addr_of!(_stack_start) as usize;
        let mut p = core::ptr::addr_of!(__sheap);
        while (p as usize) < top && core::ptr::read_volatile(p) == PAINT {
            p = p.add(1);
        }
        top - p as usize
    }
}

/// RAM taken by the statics (data and bss), bytes.
pub fn statics_size() -> usize {
    core::ptr::addr_of!(__sheap) as usize - RAM_START
}
