//! Helpers shared by every test module.

/// The display name every test model is rendered with.
pub const FILE_NAME: &str = "model.clv";

/// Insta settings with the snapshot folder bound to the top-level `snapshots/`.
pub fn snapshot_settings() -> insta::Settings {
    let mut settings = insta::Settings::clone_current();
    settings.set_snapshot_path(concat!(env!("CARGO_MANIFEST_DIR"), "/snapshots"));
    settings.set_prepend_module_to_snapshot(true);
    settings
}

/// Snapshots `$text` under the calling test's name, in the top-level `snapshots/` folder.
#[macro_export]
macro_rules! assert_text_snapshot {
    ($text:expr) => {{
        let _guard = $crate::support::snapshot_settings().bind_to_scope();
        insta::assert_snapshot!($text);
    }};
}

/// Renders `diagnostic` against `text` and asserts it starts at `line_col` ("3:5").
pub fn render_at(
    text: &str,
    diagnostic: &cleave::diagnostics::Diagnostic,
    line_col: &str,
) -> String {
    let rendered = diagnostic.render(text, FILE_NAME);
    assert_eq!(diagnostic.line_col(text).to_string(), line_col, "wrong location in\n{rendered}");
    rendered
}
