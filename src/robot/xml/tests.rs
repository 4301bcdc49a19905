//! Tests of the URDF pre-pass.

use super::*;

fn scan(text: &str) -> std::result::Result<(), (usize, String)> {
    scan_xml(text, |_| {})
}

#[test]
fn well_formed_xml_passes_the_structure_scan() {
    // source: XML 1.0 (W3C), sections 2.5 comments, 2.7 CDATA, 2.6 processing
    // instructions, 2.8 document type declaration, 3.1 start-tags (quoted attribute
    // values may hold '>' and '/')
    for text in [
        include_str!("../../../robots/arm6.urdf"),
        include_str!("../../../robots/arm7.urdf"),
        "<robot name=\"r\"/>",
        "<?xml version=\"1.0\"?><!-- a <b> c --><robot name=\"r\"><link name=\"a\"/></robot>",
        "<robot name='a>b/'><link name=\"x/>\"></link></robot>",
        "<!DOCTYPE robot [<!ELEMENT robot ANY> <!ATTLIST robot name CDATA \">\">]><robot/>",
        "<robot><![CDATA[</robot> <x>]]></robot>",
        "<robot\n  name=\"r\"\n><link\nname=\"a\"\n/></robot >",
    ] {
        assert_eq!(scan(text), Ok(()), "{text}");
    }
}

#[test]
fn structure_faults_are_located() {
    // source: the inputs below, whose faulty line is known by construction
    let cut = "<robot name=\"r\">\n<link name=\"a\"/>\n<joint name=\"j\">\n<parent link=\"a\"/>\n";
    let (line, msg) = scan(cut).unwrap_err();
    assert_eq!(line, 3);
    assert!(
        msg.contains("<joint>") && msg.contains("never closed"),
        "{msg}"
    );
    let (line, msg) = scan("<robot>\n<link name=\"a").unwrap_err();
    assert_eq!(line, 2);
    assert!(msg.contains("<link") && msg.contains("cut short"), "{msg}");
    let (line, msg) = scan("<robot>\n<link>\n</joint>\n</robot>").unwrap_err();
    assert_eq!(line, 3);
    assert!(
        msg.contains("</joint> closes <link>, opened on line 2"),
        "{msg}"
    );
    let (line, msg) = scan("<robot/>\n</robot>").unwrap_err();
    assert_eq!(line, 2);
    assert!(msg.contains("closes no open element"), "{msg}");
    let (line, msg) = scan("<robot>\n<!-- unfinished\n</robot>").unwrap_err();
    assert_eq!(line, 2);
    assert!(msg.contains("comment"), "{msg}");
    // Names with an empty namespace prefix (found by the `urdf` fuzz target: the XML
    // reader panicked on `xmlns="0":upper="0.5"`).
    for text in [
        "<robot xmlns=\"urn:x\">\n<limit xmlns=\"0\":upper=\"0.5\"/></robot>",
        "<robot xmlns=\"urn:x\">\n<limit :upper=\"0.5\"/></robot>",
        "<robot>\n<:limit/></robot>",
    ] {
        let (line, msg) = scan(text).unwrap_err();
        assert_eq!(line, 2, "{text}");
        assert!(msg.contains("starts with ':'"), "{msg}");
    }
    // A colon inside a name or a value is fine.
    assert_eq!(
        scan("<robot xmlns:xacro=\"urn:x\" a=\":b\"><xacro:p/></robot>"),
        Ok(())
    );
}

#[test]
fn nesting_beyond_the_limit_is_refused_in_linear_time() {
    // source: MAX_XML_DEPTH; one level below it passes, one above fails
    let nest = |n: usize| format!("{}{}", "<a>".repeat(n), "</a>".repeat(n));
    assert_eq!(scan(&nest(MAX_XML_DEPTH)), Ok(()));
    let (line, msg) = scan(&nest(MAX_XML_DEPTH + 1)).unwrap_err();
    assert_eq!(line, 1);
    assert!(msg.contains("nest more than 64"), "{msg}");
    // A million levels are refused at once rather than parsed.
    let start = std::time::Instant::now();
    assert!(scan(&nest(1_000_000)).is_err());
    assert!(start.elapsed() < std::time::Duration::from_secs(2));
}
