//! The fixture shown in DEVELOPERS.md ("Where tests live") holds as written.

use trellis_test_support::check;

#[test]
fn the_example_in_the_contributor_guide_holds() {
    check(
        r#"
        start Request
        Request { Ticket | Tikcet }
                           ^^^^^^ error undefined: did you mean `Ticket`
        Ticket { "ticket" }
        "#,
    );
}
