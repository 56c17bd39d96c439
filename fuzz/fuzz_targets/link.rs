//! Bytes as a share link's payload: the page inflates the link and hands the text to
//! `Project::from_json` (the same call as a project file or the autosave). What loads
//! must write and read back with the same samples and page state.
#![no_main]
use ddlens::analysis::Project;
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    if let Ok((project, _)) = Project::from_json(text) {
        let (again, _) = Project::from_json(&project.to_json()).expect("a loaded project reads back");
        assert_eq!(again.samples.len(), project.samples.len());
        assert_eq!(again.page, project.page);
    }
});
