//! What the same actions mean on a powered board: said in every debrief
//! and on the trainee's page (common practice; defer to the board maker
//! and local codes).

/// The caution every debrief ends with.
pub const SAFETY: &str = "\
On a real board: this exercise ran on a simulated board, where a mistake burns nothing. \
On a powered board the same programs drive real pins. Power it from a current-limited \
supply set just above the board's expected current, so a short or two drivers fighting \
cannot overheat a part; take ESD precautions (a grounded wrist strap and mat) whenever \
you handle it; preload safe values with SAMPLE/PRELOAD before any EXTEST, so no pin drives \
an unknown level the moment EXTEST takes over; never let two drivers fight on a net; and \
follow the board maker's procedures and your local codes and regulations, which come \
before anything said here.";

/// What a hazard of a kind would do on a real board, in plain words.
pub fn on_a_real_board(kind: &str) -> &'static str {
    match kind {
        "contention" => "two outputs drive one net to opposite levels: on a powered board both output stages carry a large current and heat up; repeated or long, it can damage them",
        "floating capture" => "an input read a net nothing drives: on a real board it reads noise, so the test passes or fails by chance",
        "scan output on a rail" => "a scan cell drives a power or ground rail: on a real board the pin fights the supply and can be destroyed",
        "scan output against a non-scan output" => "a scan cell drives against a part outside the chain: on a real board both outputs fight",
        "EXTEST without PRELOAD" => "EXTEST took over the pins before safe values were loaded: on a real board the pins drive whatever the boundary register held, possibly against other drivers",
        "TCK faster than a device allows" => "TCK above a device's rated speed: on a real board the scan reads wrong bits",
        "TCK stopped high" => "TCK stopped high on a device that may only stop low: on a real board that device may lose its state",
        "scan length is not the chain's" => "a scan whose length is not the chain's: on a real board bits land in the wrong cells, and the pins may drive unintended values",
        _ => "see the hazard's description",
    }
}
