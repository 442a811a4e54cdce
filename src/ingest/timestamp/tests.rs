use super::*;
use jiff::tz::TimeZone;
use proptest::prelude::*;

fn utc(format: &str, tz: &str, s: &str) -> i64 {
    let mut p = TimestampParser::new(format, tz, 0.0).unwrap();
    p.parse(s.as_bytes()).unwrap_or_else(|| panic!("no parse {s:?} with {format:?}")).0
}

/// Reference instant from jiff's own RFC 3339 parser.
fn jiff_ms(s: &str) -> i64 {
    s.parse::<jiff::Timestamp>().unwrap().as_millisecond()
}

#[test]
fn the_common_formats_read_the_same_instant() {
    let want = jiff_ms("2026-03-02T18:04:05Z");
    assert_eq!(utc("%Y-%m-%d %H:%M:%S", "UTC", "2026-03-02 18:04:05"), want);
    assert_eq!(utc("%d.%m.%Y %H:%M:%S", "UTC", "02.03.2026 18:04:05"), want);
    assert_eq!(utc("%m/%d/%Y %I:%M:%S %p", "UTC", "3/2/2026 6:04:05 PM"), want);
    assert_eq!(utc("%d/%m/%Y %H:%M", "UTC", "02/03/2026 18:04"), want - 5000);
    assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05Z"), want);
    assert_eq!(utc("rfc3339", "UTC", "2026-03-02T19:04:05+01:00"), want);
    assert_eq!(utc("rfc3339", "+01:00", "2026-03-02 19:04:05"), want);
    assert_eq!(utc("%Y-%m-%dT%H:%M:%S%z", "UTC", "2026-03-02T12:04:05-0600"), want);
    assert_eq!(utc("unix_s", "Europe/Berlin", "1772474645"), want);
    assert_eq!(utc("unix_ms", "UTC", "1772474645000"), want);
    assert_eq!(utc("%d-%b-%Y %H:%M:%S", "UTC", "02-Mar-2026 18:04:05"), want);
    assert_eq!(utc("%F %T", "UTC", "2026-03-02 18:04:05"), want);
}

#[test]
fn twelve_oclock_am_and_pm() {
    let f = "%m/%d/%Y %I:%M:%S %p";
    assert_eq!(utc(f, "UTC", "03/02/2026 12:00:00 AM"), jiff_ms("2026-03-02T00:00:00Z"));
    assert_eq!(utc(f, "UTC", "03/02/2026 12:00:00 PM"), jiff_ms("2026-03-02T12:00:00Z"));
    let mut p = TimestampParser::new(f, "UTC", 0.0).unwrap();
    assert!(p.parse(b"03/02/2026 13:00:00 PM").is_none());
}

#[test]
fn fractional_seconds_both_ways() {
    let want = jiff_ms("2026-03-02T18:04:05.250Z");
    assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05.25"), want);
    assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05,250"), want);
    assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05"), want - 250);
    assert_eq!(utc("%Y-%m-%d %H:%M:%S.%f", "UTC", "2026-03-02 18:04:05.250000"), want);
    assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05.2504Z"), want);
    assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05.2496Z"), want);
}

#[test]
fn excel_serial_days_in_the_1900_system() {
    // Serial 46083 = 2026-03-02 (1900 date system: 1899-12-30 + 46083 days; hand calculation
    // checked against jiff's civil arithmetic below).
    let d0 = jiff::civil::date(1899, 12, 30);
    let d = d0.checked_add(jiff::Span::new().days(46_083)).unwrap();
    assert_eq!(d, jiff::civil::date(2026, 3, 2));
    assert_eq!(utc("excel_days", "UTC", "46083.75"), jiff_ms("2026-03-02T18:00:00Z"));
    assert_eq!(utc("excel_days", "+01:00", "46083.75"), jiff_ms("2026-03-02T17:00:00Z"));
    // Serial 1 is 1900-01-01 (the system's day one).
    assert_eq!(utc("excel_days", "UTC", "1"), jiff_ms("1900-01-01T00:00:00Z"));
}

#[test]
fn clock_offset_is_added() {
    let mut p = TimestampParser::new("rfc3339", "UTC", -2.5).unwrap();
    let (ms, _) = p.parse(b"2026-03-02T18:04:05Z").unwrap();
    assert_eq!(ms, jiff_ms("2026-03-02T18:04:02.500Z"));
}

#[test]
fn bad_text_and_bad_dates_do_not_parse() {
    let mut p = TimestampParser::new("%Y-%m-%d %H:%M:%S", "UTC", 0.0).unwrap();
    for s in [
        "2026-02-29 00:00:00",
        "2026-13-01 00:00:00",
        "2026-03-02 24:00:00",
        "garbage",
        "2026-03-02 18:04:05 x",
        "2026-03-02",
    ] {
        assert!(p.parse(s.as_bytes()).is_none(), "{s}");
    }
    assert!(TimeFormat::parse("%H:%M").is_err());
    assert!(TimeFormat::parse("%Y-%m-%d %Q").is_err());
    assert!(Zone::parse("Mars/Olympus").is_err());
    assert!(matches!(Zone::parse("+05:30"), Ok(Zone::Fixed(19_800))));
    assert!(matches!(Zone::parse("UTC-06:00"), Ok(Zone::Fixed(-21_600))));
}

/// Parse a series of local times in a zone, returning UTC instants and the cases met.
fn series(tz: &str, locals: &[&str]) -> Vec<(String, Option<DstResolution>)> {
    let mut p = TimestampParser::new("%Y-%m-%d %H:%M:%S", tz, 0.0).unwrap();
    locals
        .iter()
        .map(|s| {
            let (ms, case) = p.parse(s.as_bytes()).unwrap();
            (format_utc_ms(ms), case.map(|c| c.resolution))
        })
        .collect()
}

#[test]
fn berlin_spring_forward_gap_shifts_forward_by_the_gap() {
    // 2026-03-29: clocks go 02:00 CET -> 03:00 CEST (EU rule: last Sunday of March, 01:00 UTC).
    let got = series("Europe/Berlin", &["2026-03-29 01:59:00", "2026-03-29 02:30:00", "2026-03-29 03:00:00"]);
    assert_eq!(got[0], ("2026-03-29T00:59:00Z".into(), None));
    // 02:30 does not exist; shifted one hour forward to 03:30 CEST = 01:30 UTC (jiff
    // "compatible", checked against jiff's own answer below).
    assert_eq!(got[1], ("2026-03-29T01:30:00Z".into(), Some(DstResolution::GapShiftedForward)));
    let jiff_compat = jiff::civil::datetime(2026, 3, 29, 2, 30, 0, 0)
        .to_zoned(TimeZone::get("Europe/Berlin").unwrap())
        .unwrap()
        .timestamp();
    assert_eq!(got[1].0, jiff_compat.strftime("%Y-%m-%dT%H:%M:%SZ").to_string());
    assert_eq!(got[2], ("2026-03-29T01:00:00Z".into(), None));
}

#[test]
fn berlin_fall_back_fold_takes_summer_time_until_the_clock_steps_back() {
    // 2026-10-25: 03:00 CEST -> 02:00 CET (EU rule: last Sunday of October, 01:00 UTC).
    let got = series(
        "Europe/Berlin",
        &[
            "2026-10-25 01:30:00",
            "2026-10-25 02:00:00",
            "2026-10-25 02:30:00",
            "2026-10-25 02:00:00", // the step back: second pass, CET
            "2026-10-25 02:30:00",
            "2026-10-25 03:00:00",
        ],
    );
    let want = [
        ("2026-10-24T23:30:00Z", None),
        ("2026-10-25T00:00:00Z", Some(DstResolution::AmbiguousEarlier)),
        ("2026-10-25T00:30:00Z", Some(DstResolution::AmbiguousEarlier)),
        ("2026-10-25T01:00:00Z", Some(DstResolution::AmbiguousLater)),
        ("2026-10-25T01:30:00Z", Some(DstResolution::AmbiguousLater)),
        ("2026-10-25T02:00:00Z", None),
    ];
    for (g, w) in got.iter().zip(want) {
        assert_eq!((g.0.as_str(), g.1), w);
    }
}

#[test]
fn chicago_gap_and_fold() {
    // US rule since 2007: second Sunday of March 02:00 CST -> 03:00 CDT; first Sunday of
    // November 02:00 CDT -> 01:00 CST.
    let spring = series("America/Chicago", &["2026-03-08 02:15:00"]);
    assert_eq!(spring[0], ("2026-03-08T08:15:00Z".into(), Some(DstResolution::GapShiftedForward)));
    let fall = series(
        "America/Chicago",
        &[
            "2026-11-01 00:59:00",
            "2026-11-01 01:00:00",
            "2026-11-01 01:59:00",
            "2026-11-01 01:00:00",
            "2026-11-01 02:00:00",
        ],
    );
    assert_eq!(fall[0], ("2026-11-01T05:59:00Z".into(), None));
    assert_eq!(fall[1], ("2026-11-01T06:00:00Z".into(), Some(DstResolution::AmbiguousEarlier)));
    assert_eq!(fall[2], ("2026-11-01T06:59:00Z".into(), Some(DstResolution::AmbiguousEarlier)));
    assert_eq!(fall[3], ("2026-11-01T07:00:00Z".into(), Some(DstResolution::AmbiguousLater)));
    assert_eq!(fall[4], ("2026-11-01T08:00:00Z".into(), None));
}

proptest! {
    // Reference: jiff's strftime/Zoned for formatting and its tz database for the offset.
    #[test]
    fn timestamps_round_trip_through_the_formats(
        secs in 0i64..4_102_444_800, ms in 0i64..1000, zone_ix in 0usize..4, fmt_ix in 0usize..5,
    ) {
        let zones = ["UTC", "+05:30", "Europe/Berlin", "America/Chicago"];
        let formats = ["%Y-%m-%d %H:%M:%S%.f", "%d.%m.%Y %H:%M:%S%.f", "%m/%d/%Y %I:%M:%S%.f %p",
                       "rfc3339", "%Y-%m-%dT%H:%M:%S%.f%z"];
        let ts = jiff::Timestamp::from_millisecond(secs * 1000 + ms).unwrap();
        let tz = match zones[zone_ix] {
            "+05:30" => TimeZone::fixed(jiff::tz::offset(5).checked_add(
                jiff::SignedDuration::from_mins(30)).unwrap()),
            name => TimeZone::get(name).unwrap(),
        };
        let z = ts.to_zoned(tz.clone());
        let f = formats[fmt_ix];
        let text = match f {
            "rfc3339" => z.strftime("%Y-%m-%dT%H:%M:%S%.3f%:z").to_string(),
            other => z.strftime(&other.replace("%.f", "%.3f")).to_string(),
        };
        let mut p = TimestampParser::new(f, zones[zone_ix], 0.0).unwrap();
        let (got, case) = p.parse(text.as_bytes()).unwrap();
        let has_offset = f == "rfc3339" || f.ends_with("%z");
        // A local time in a fold read alone takes the earlier offset: only then may it differ.
        let folded = matches!(case, Some(DstCase { resolution: DstResolution::AmbiguousEarlier, .. }));
        if has_offset || !folded {
            prop_assert_eq!(got, ts.as_millisecond(), "{}", text);
        } else {
            let earlier = z.datetime()
                .to_zoned(tz).unwrap().timestamp().as_millisecond();
            prop_assert_eq!(got, earlier);
        }
    }
}
