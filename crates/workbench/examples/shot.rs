fn main() {
    let args: Vec<String> = std::env::args().collect();
    let page = args.get(1).map(String::as_str).unwrap_or("drawer");
    let text = r#"(format: 1, title: "Relay at unit magnification", rail_length_mm: 500.0, wavelengths_nm: [486.1327, 587.5618, 656.2725], primary_wavelength: 1,
        object: Point(at_mm: 0.0, height_mm: 2.0), parts: [(name: "Camera plane", at_mm: 400.0, kind: Screen(diameter_mm: 30.0))],
        aims: [SharpOn(screen: "Camera plane", rms_um: 20.0), Magnification(value: -1.0, tolerance: 0.01)])"#;
    let bench = lumenrail_bench::file::parse("t", text).unwrap().bench;
    let mut wb = lumenrail_workbench::Workbench::new(bench, None);
    wb.left =
        if page == "drawer" { lumenrail_workbench::LeftPage::Drawer } else { lumenrail_workbench::LeftPage::Aims };
    if page == "aims" {
        wb.arranger.max_parts = 2;
        wb.start_arranger();
        while wb.poll_arranger() {
            std::thread::sleep(std::time::Duration::from_millis(50));
        }
        if let Some((a, d)) = &wb.arranger.result {
            let c = &a.candidates[0];
            let _ = (d, c);
            wb.arranger.pinned = Some(0);
        }
    }
    let img = lumenrail_export::picture::render(1280.0, 800.0, 1.0, |ui| wb.ui(ui));
    img.save(format!("/tmp/page-{page}.png")).unwrap();
}
