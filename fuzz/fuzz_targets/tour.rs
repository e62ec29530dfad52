//! The TSPLIB TOUR reader on arbitrary bytes; a tour that parses must list distinct nodes,
//! as many as its DIMENSION says when it gives one.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let Ok(tour) = wend_tsplib::parse_tour(&text, "fuzz.tour") else {
        return;
    };
    if let Some(d) = tour.dimension {
        assert_eq!(tour.nodes.len(), d, "a tour with a DIMENSION visits that many nodes");
    }
    let mut nodes = tour.nodes.clone();
    nodes.sort_unstable();
    nodes.dedup();
    assert_eq!(nodes.len(), tour.nodes.len(), "no node twice");
});
