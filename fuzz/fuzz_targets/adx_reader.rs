//! Any bytes through the ADX reader and the record-to-contact mapping: no panic, and the reader
//! always reaches the end.
#![no_main]

use libfuzzer_sys::fuzz_target;
use nearsky::domain::{Callsign, ContactId, Locator};
use nearsky::formats::adif::adx::AdxReader;
use nearsky::formats::adif::{self, ImportContext, Next, RawRecord};

fuzz_target!(|data: &[u8]| {
    let none = |_: &Callsign| -> Option<Locator> { None };
    let station = Callsign::parse("Q3NET").ok();
    let ctx = ImportContext { station: station.as_ref(), drill: None, default_drill: None, file: "fuzz.adx", station_locator: &none };
    let mut r = AdxReader::new(data);
    let mut rec = RawRecord::default();
    for _ in 0..=data.len() {
        match r.next_record(&mut rec) {
            Ok(Next::End) | Err(_) => return,
            Ok(Next::Rejected(e)) => {
                let _ = e.to_string();
            }
            Ok(Next::Record) => {
                let _ = adif::to_contact(&rec, &ctx, || ContactId(nearsky::domain::contact::Uuid::nil()));
            }
        }
    }
    panic!("the reader did not reach the end of {} bytes", data.len());
});
