package theme

import "github.com/stipple-maps/stipple/render"

// Text is the words of a theme. Fields with placeholders name them in
// braces; Fill replaces them.
type Text struct {
	// CreditPrefix goes before the credit: "Source: ". A credit that
	// already starts with it, or with a word and a colon, is kept as
	// written (render.CreditLineWith).
	CreditPrefix string `toml:"credit_prefix"`
	// Caution is the full caution of the legends, viewer and print pages.
	Caution string `toml:"caution"`
	// CautionShort is the one line that stays when the viewer's key folds.
	CautionShort string `toml:"caution_short"`
	// DotNote is the dot note, with {n} for the people per dot:
	// "1 dot = {n} people".
	DotNote string `toml:"dot_note"`
	// DotNoteOne is the dot note when a dot is one person.
	DotNoteOne string `toml:"dot_note_one"`
	// NotDrawn says how many people have no dot: {people}, {dots}.
	NotDrawn string `toml:"not_drawn"`
	// BeyondLimit says how many people are beyond the tiles' latitude
	// limit: {people}.
	BeyondLimit string `toml:"beyond_limit"`
	// RowsWithoutArea says how many people are in count rows that match no
	// area: {people}.
	RowsWithoutArea string `toml:"rows_without_area"`
	// People heads the print legend's people column.
	People string `toml:"people"`
	// Dots heads the print legend's dots column.
	Dots string `toml:"dots"`
	// All names the print legend's total row.
	All string `toml:"all"`
	// Scale is the print scale bar's caption: {denominator}, {latitude}.
	Scale string `toml:"scale"`
	// ScaleUndefined replaces it when the projection has no scale at the
	// map's centre.
	ScaleUndefined string `toml:"scale_undefined"`

	// ViewerLanguage is the language of these words as a BCP 47 tag
	// ("en", "fr", "de-CH"), which the viewer's pages declare (lang) so
	// screen readers pronounce them right.
	ViewerLanguage string `toml:"viewer_language"`
	// ViewerMapLabel is what a screen reader says of the viewer's map, with
	// {title} for the map's title.
	ViewerMapLabel string `toml:"viewer_map_label"`
	// ViewerStillAlt describes the still that an embed shows without
	// JavaScript, with {title} for the map's title.
	ViewerStillAlt string `toml:"viewer_still_alt"`
	// ViewerControls names the viewer's group of zoom buttons for screen
	// readers.
	ViewerControls string `toml:"viewer_controls"`
	// ViewerZoomIn names the viewer's zoom-in button.
	ViewerZoomIn string `toml:"viewer_zoom_in"`
	// ViewerZoomInTip is the zoom-in button's tooltip, naming its keyboard
	// key.
	ViewerZoomInTip string `toml:"viewer_zoom_in_tip"`
	// ViewerZoomOut names the viewer's zoom-out button.
	ViewerZoomOut string `toml:"viewer_zoom_out"`
	// ViewerZoomOutTip is the zoom-out button's tooltip, naming its
	// keyboard key.
	ViewerZoomOutTip string `toml:"viewer_zoom_out_tip"`
	// ViewerFit is the button that shows the whole map.
	ViewerFit string `toml:"viewer_fit"`
	// ViewerFitTip is the fit button's tooltip, naming its keyboard key.
	ViewerFitTip string `toml:"viewer_fit_tip"`
	// ViewerAreas is the button that draws the counting areas' boundaries.
	ViewerAreas string `toml:"viewer_areas"`
	// ViewerAreasTip is the areas button's tooltip.
	ViewerAreasTip string `toml:"viewer_areas_tip"`
	// ViewerHideKey is the button that folds the viewer's key.
	ViewerHideKey string `toml:"viewer_hide_key"`
	// ViewerShowKey is the same button once the key is folded.
	ViewerShowKey string `toml:"viewer_show_key"`
	// ViewerShare is a legend count's tooltip: {share} is the category's
	// share of all people, "12.5%".
	ViewerShare string `toml:"viewer_share"`
	// ViewerMapShown names, for screen readers, the switch between the
	// maps of a viewer with several.
	ViewerMapShown string `toml:"viewer_map_shown"`
	// ViewerCompare is the button that shows two maps side by side.
	ViewerCompare string `toml:"viewer_compare"`
	// ViewerRightShows names the list that picks the map right of the
	// divider.
	ViewerRightShows string `toml:"viewer_right_shows"`
	// ViewerDivider names the divider between the two compared maps.
	ViewerDivider string `toml:"viewer_divider"`
	// ViewerLeftSide heads the key of the map left of the divider.
	ViewerLeftSide string `toml:"viewer_left_side"`
	// ViewerRightSide heads the key of the map right of the divider.
	ViewerRightSide string `toml:"viewer_right_side"`

	// LatitudeNorth writes a latitude north of the equator, {degrees} being
	// its number: "{degrees}°N". The alt text and the print page's scale
	// caption and projection note use the four of them.
	LatitudeNorth string `toml:"latitude_north"`
	// LatitudeSouth writes a latitude south of the equator: "{degrees}°S".
	LatitudeSouth string `toml:"latitude_south"`
	// LongitudeEast writes a longitude east of Greenwich: "{degrees}°E".
	LongitudeEast string `toml:"longitude_east"`
	// LongitudeWest writes a longitude west of Greenwich: "{degrees}°W".
	LongitudeWest string `toml:"longitude_west"`
	// CautionEstimates follows the caution, after a space, when the counts
	// are survey estimates with margins of error.
	CautionEstimates string `toml:"caution_estimates"`
	// ShadeKeyTitle heads the key of the diversity shading
	// (shade_diversity) in the viewer and on print pages.
	ShadeKeyTitle string `toml:"shade_key_title"`

	// ProjectionAlbers is the print page's projection note for an Albers
	// conic: {parallel1} and {parallel2} are its standard parallels. The
	// page ends each projection note with a full stop.
	ProjectionAlbers string `toml:"projection_albers"`
	// ProjectionAlbersOne is the note for an Albers conic with one
	// standard parallel, {parallel}.
	ProjectionAlbersOne string `toml:"projection_albers_one"`
	// ProjectionLAEA is the note for a Lambert azimuthal projection
	// centred at {latitude} {longitude}.
	ProjectionLAEA string `toml:"projection_laea"`
	// ProjectionEqualEarth is the note for Equal Earth with its central
	// meridian, {longitude}.
	ProjectionEqualEarth string `toml:"projection_equal_earth"`
	// ProjectionMercator is the note for Web Mercator.
	ProjectionMercator string `toml:"projection_mercator"`
	// ProjectionPlateCarree is the note for the plate carrée.
	ProjectionPlateCarree string `toml:"projection_plate_carree"`
	// PrintSubtitle is a print page's subtitle: {people} printed in
	// {areas} areas.
	PrintSubtitle string `toml:"print_subtitle"`
	// PrintSubtitleFrame is the subtitle of a page that prints a box:
	// {people}.
	PrintSubtitleFrame string `toml:"print_subtitle_frame"`
	// PrintFramePeople is the footnote of a page that prints a box: how
	// its people were counted from {dots} dots inside {box} at {n} people
	// per dot.
	PrintFramePeople string `toml:"print_frame_people"`
	// PrintRule is the footnote that says how the printed areas were
	// chosen: {rule}.
	PrintRule string `toml:"print_rule"`
	// PrintAllDrawn is the print footnote when every dot found room.
	PrintAllDrawn string `toml:"print_all_drawn"`
	// PrintNotDrawn is the print footnote on the {people} whose dots found
	// no room in their areas.
	PrintNotDrawn string `toml:"print_not_drawn"`

	// AltViewer opens the alt text (alt.txt) of a viewer of {n} maps.
	AltViewer string `toml:"alt_viewer"`
	// AltMapNumber starts each map's paragraph in that alt text: map {n}.
	AltMapNumber string `toml:"alt_map_number"`
	// AltMapNumberNamed starts the paragraph of map {n} that has a name,
	// {name}.
	AltMapNumberNamed string `toml:"alt_map_number_named"`
	// AltTitle opens the alt text: {title}.
	AltTitle string `toml:"alt_title"`
	// AltUntitled stands for the title of a map without one.
	AltUntitled string `toml:"alt_untitled"`
	// AltDots says in the alt text what a dot is: {n} people per dot.
	AltDots string `toml:"alt_dots"`
	// AltDotsOne says it when a dot is one person.
	AltDotsOne string `toml:"alt_dots_one"`
	// AltOneGroup gives the one group of a map: {label}, {people}.
	AltOneGroup string `toml:"alt_one_group"`
	// AltGroups introduces the list of {n} groups, {people} in all.
	AltGroups string `toml:"alt_groups"`
	// AltGroup is one group of that list: {label}, {people}, {share}
	// ("12.5%"). The list separates groups with ";" and ends with ".".
	AltGroup string `toml:"alt_group"`
	// AltNotDrawn says how many people, {people}, have no dot.
	AltNotDrawn string `toml:"alt_not_drawn"`
	// AltBeyondLimit says how many people, {people}, are beyond the tiles'
	// latitude limit.
	AltBeyondLimit string `toml:"alt_beyond_limit"`
	// AltTheilH states Theil's H, {h}, and what it measures.
	AltTheilH string `toml:"alt_theil_h"`
	// AltMutualInformation states the mutual information index, {m}.
	AltMutualInformation string `toml:"alt_mutual_information"`
	// AltInterval gives H's interval for survey estimates: {draws} draws,
	// {level} ("90%"), {low} and {high}.
	AltInterval string `toml:"alt_interval"`
	// AltCovers says where the map is: {west}, {east}, {south} and
	// {north}, written with latitude_north and its kin.
	AltCovers string `toml:"alt_covers"`

	// MethodsTitle heads the methods note (methods.txt): {title}.
	MethodsTitle string `toml:"methods_title"`
	// MethodsUntitled stands for the title of a map without one.
	MethodsUntitled string `toml:"methods_untitled"`
	// MethodsNoSource replaces the credit line when the map file has no
	// credit.
	MethodsNoSource string `toml:"methods_no_source"`
	// MethodsTotals gives {dot_note}, {people}, {groups} (methods_groups)
	// and {dots}.
	MethodsTotals string `toml:"methods_totals"`
	// MethodsGroupsOne counts one group.
	MethodsGroupsOne string `toml:"methods_groups_one"`
	// MethodsGroups counts {n} groups.
	MethodsGroups string `toml:"methods_groups"`
	// MethodsPlacement says how dots are placed, with the {seed}.
	MethodsPlacement string `toml:"methods_placement"`
	// MethodsRounding gives the rounding {rule} (methods_rounding_random
	// or methods_rounding_exact).
	MethodsRounding string `toml:"methods_rounding"`
	// MethodsRoundingRandom says what rounding = "random" does; map.json
	// repeats it.
	MethodsRoundingRandom string `toml:"methods_rounding_random"`
	// MethodsRoundingExact says what rounding = "exact" does.
	MethodsRoundingExact string `toml:"methods_rounding_exact"`
	// MethodsAllDrawn says that every person counted has a dot.
	MethodsAllDrawn string `toml:"methods_all_drawn"`
	// MethodsNotDrawn heads the list of people without a dot.
	MethodsNotDrawn string `toml:"methods_not_drawn"`
	// MethodsNotDrawnIn is a row of that list: {people} in {areas}
	// (methods_areas) without a dot, and the {reason}. Each row starts
	// with "- ".
	MethodsNotDrawnIn string `toml:"methods_not_drawn_in"`
	// MethodsNotDrawnRow is a row without a number of areas: {people},
	// {reason}.
	MethodsNotDrawnRow string `toml:"methods_not_drawn_row"`
	// MethodsAreasOne counts one area.
	MethodsAreasOne string `toml:"methods_areas_one"`
	// MethodsAreas counts {n} areas.
	MethodsAreas string `toml:"methods_areas"`
	// MethodsBeyondLimit is the reason of the people beyond the tiles'
	// latitude limit.
	MethodsBeyondLimit string `toml:"methods_beyond_limit"`
	// MethodsRowsWithoutArea is the reason of the people in count rows
	// that match no area.
	MethodsRowsWithoutArea string `toml:"methods_rows_without_area"`
	// MethodsNoRepairs says that the area boundaries needed no repair.
	MethodsNoRepairs string `toml:"methods_no_repairs"`
	// MethodsRepairs gives the {repairs} (methods_repairs_count) made to
	// the boundaries, their {kinds} (methods_repair_…, joined by ", ") and
	// the {notes} (methods_notes_count).
	MethodsRepairs string `toml:"methods_repairs"`
	// MethodsRepairsNoKinds is the same without kinds: {repairs},
	// {notes}.
	MethodsRepairsNoKinds string `toml:"methods_repairs_no_kinds"`
	// MethodsRepairsCountOne counts one repair.
	MethodsRepairsCountOne string `toml:"methods_repairs_count_one"`
	// MethodsRepairsCount counts {n} repairs.
	MethodsRepairsCount string `toml:"methods_repairs_count"`
	// MethodsNotesCountOne counts one geometry note.
	MethodsNotesCountOne string `toml:"methods_notes_count_one"`
	// MethodsNotesCount counts {n} geometry notes.
	MethodsNotesCount string `toml:"methods_notes_count"`
	// MethodsRepairClosedRings counts {n} rings closed.
	MethodsRepairClosedRings string `toml:"methods_repair_closed_rings"`
	// MethodsRepairDroppedPoints counts {n} repeated points dropped.
	MethodsRepairDroppedPoints string `toml:"methods_repair_dropped_points"`
	// MethodsRepairDroppedRings counts {n} rings without area dropped.
	MethodsRepairDroppedRings string `toml:"methods_repair_dropped_rings"`
	// MethodsRepairSelfIntersecting counts {n} self-intersecting rings.
	MethodsRepairSelfIntersecting string `toml:"methods_repair_self_intersecting"`
	// MethodsRepairAntimeridian counts {n} rings unwrapped at 180°.
	MethodsRepairAntimeridian string `toml:"methods_repair_antimeridian"`
	// MethodsRepairPolarRings counts {n} rings closed along a pole.
	MethodsRepairPolarRings string `toml:"methods_repair_polar_rings"`
	// MethodsRepairEmptyFeatures counts {n} areas without a polygon.
	MethodsRepairEmptyFeatures string `toml:"methods_repair_empty_features"`
	// MethodsMeasures heads the mixing measures, naming the per-area
	// table, {file}.
	MethodsMeasures string `toml:"methods_measures"`
	// MethodsTheilH states Theil's H, {h} (a row starting "- ").
	MethodsTheilH string `toml:"methods_theil_h"`
	// MethodsMutualInformation states the mutual information index, {m}.
	MethodsMutualInformation string `toml:"methods_mutual_information"`
	// MethodsInterval gives H's interval for survey estimates: {draws},
	// {seed}, {level} ("90%"), {low} and {high}.
	MethodsInterval string `toml:"methods_interval"`
	// MethodsEvenness closes the measures: what they do not measure.
	MethodsEvenness string `toml:"methods_evenness"`
	// MethodsCaution gives the map's {caution}.
	MethodsCaution string `toml:"methods_caution"`
	// MethodsMadeWith names the stipple {version} that made the map.
	MethodsMadeWith string `toml:"methods_made_with"`
}

// DefaultText is the English text.
var DefaultText = Text{
	CreditPrefix:    render.DefaultCreditPrefix,
	Caution:         render.Caution,
	CautionShort:    render.CautionShort,
	DotNote:         "1 dot = {n} people",
	DotNoteOne:      "1 dot = 1 person",
	NotDrawn:        "{people} people ({dots} dots) are not drawn; map.json lists the areas and why.",
	BeyondLimit:     "{people} people live in areas beyond the tile projection's latitude limit (85.05° north or south) and are not on the tiles.",
	RowsWithoutArea: "{people} people are in count rows that match no area and are not on the map.",
	People:          "people",
	Dots:            "dots",
	All:             "All",
	Scale:           "Scale 1 : {denominator}, true at the map centre ({latitude})",
	ScaleUndefined:  "Scale not defined at the map centre.",

	ViewerLanguage:   "en",
	ViewerMapLabel:   "{title}. Dot-density map: drag or use the arrow keys to move, + and - to zoom.",
	ViewerStillAlt:   "{title}: a still of the whole map with its key; the zoomable map needs JavaScript.",
	ViewerControls:   "Map view",
	ViewerZoomIn:     "Zoom in",
	ViewerZoomInTip:  "Zoom in (+)",
	ViewerZoomOut:    "Zoom out",
	ViewerZoomOutTip: "Zoom out (-)",
	ViewerFit:        "Fit",
	ViewerFitTip:     "Show the whole map (0)",
	ViewerAreas:      "Areas",
	ViewerAreasTip:   "Draw the boundaries of the counting areas",
	ViewerHideKey:    "Hide key",
	ViewerShowKey:    "Show key",
	ViewerShare:      "{share} of all",
	ViewerMapShown:   "Map shown",
	ViewerCompare:    "Compare",
	ViewerRightShows: "Right side shows",
	ViewerDivider:    "Divider between the two maps",
	ViewerLeftSide:   "Left of the divider",
	ViewerRightSide:  "Right of the divider",

	LatitudeNorth:    "{degrees}°N",
	LatitudeSouth:    "{degrees}°S",
	LongitudeEast:    "{degrees}°E",
	LongitudeWest:    "{degrees}°W",
	CautionEstimates: "These counts are survey estimates with margins of error: small differences between areas may not be real.",
	ShadeKeyTitle:    "Diversity of each area (0 = one group, 1 = all groups equal)",

	ProjectionAlbers:      "Albers equal-area conic, standard parallels {parallel1} and {parallel2}, WGS 84",
	ProjectionAlbersOne:   "Albers equal-area conic, standard parallel {parallel}, WGS 84",
	ProjectionLAEA:        "Lambert azimuthal equal-area, centred at {latitude} {longitude}, WGS 84",
	ProjectionEqualEarth:  "Equal Earth, central meridian {longitude}, WGS 84",
	ProjectionMercator:    "Web Mercator (EPSG:3857), not equal-area: dots thin out towards the poles",
	ProjectionPlateCarree: "Plate carrée (equirectangular), not equal-area",
	PrintSubtitle:         "{people} people in {areas} areas",
	PrintSubtitleFrame:    "About {people} people inside the frame",
	PrintFramePeople:      "People: the {dots} dots inside the box {box} × {n} people per dot; areas cut by the box count by their dots inside it.",
	PrintRule:             "People and dots: {rule}.",
	PrintAllDrawn:         "Not drawn: 0 people; every dot found room in its area.",
	PrintNotDrawn:         "Not drawn: {people} people, in areas too small or too thin to hold their dots.",

	AltViewer:            "A viewer of {n} dot-density maps, which can be shown one at a time or two side by side.",
	AltMapNumber:         "Map {n}:",
	AltMapNumberNamed:    "Map {n} ({name}):",
	AltTitle:             "Dot-density map: {title}.",
	AltUntitled:          "untitled",
	AltDots:              "Each dot stands for {n} people, coloured by group and placed at random inside the area where they were counted.",
	AltDotsOne:           "Each dot stands for one person, coloured by group and placed at random inside the area where they were counted.",
	AltOneGroup:          "One group: {label}, {people} people.",
	AltGroups:            "{n} groups, {people} people in all:",
	AltGroup:             "{label}, {people} people ({share})",
	AltNotDrawn:          "{people} people are not drawn.",
	AltBeyondLimit:       "{people} people are beyond the tile projection's latitude limit (85.05° north or south) and are not on the tiles.",
	AltTheilH:            "Theil's H, how unevenly the groups are spread over the areas (0 when every area has the whole map's mix, 1 when each area holds one group), is {h}.",
	AltMutualInformation: "The mutual information index M, H times the diversity of the whole map, is {m}.",
	AltInterval:          "The counts are survey estimates: over {draws} seeded draws of the counts within their margins of error, {level} of the values of H lie between {low} and {high}.",
	AltCovers:            "The map covers longitudes {west} to {east} and latitudes {south} to {north}.",

	MethodsTitle:                  "About the map: {title}",
	MethodsUntitled:               "this map",
	MethodsNoSource:               "Source: not given in the map file.",
	MethodsTotals:                 "{dot_note}. The map shows {people} people in {groups} with {dots} dots.",
	MethodsGroupsOne:              "1 group",
	MethodsGroups:                 "{n} groups",
	MethodsPlacement:              "Each dot is placed at random inside the area its people were counted in, by a generator seeded with {seed}: the same data and seed place every dot in the same spot.",
	MethodsRounding:               "Rounding: {rule}",
	MethodsRoundingRandom:         "each area gets its people divided by the dot value in whole dots, and the fraction of a dot left over becomes one more dot with a chance equal to that fraction, so rounding favours no area and the expected total equals the count (the drawn total may differ from it by a few dots).",
	MethodsRoundingExact:          "each group gets exactly its total people divided by the dot value, rounded to the nearest whole dot, shared among the areas by largest remainders.",
	MethodsAllDrawn:               "Not drawn: none; every person counted has a dot.",
	MethodsNotDrawn:               "Not drawn:",
	MethodsNotDrawnIn:             "{people} people in {areas}: {reason}",
	MethodsNotDrawnRow:            "{people} people: {reason}",
	MethodsAreasOne:               "1 area",
	MethodsAreas:                  "{n} areas",
	MethodsBeyondLimit:            "beyond the tiles' latitude limit (85.05° north or south), which Web Mercator tiles cannot show; print pages draw them",
	MethodsRowsWithoutArea:        "in rows of the count table that match no area",
	MethodsNoRepairs:              "Repairs: none; the area boundaries were used as they were.",
	MethodsRepairs:                "Repairs: {repairs} made while reading the area boundaries ({kinds}); {notes} on the areas (stipple inspect lists them).",
	MethodsRepairsNoKinds:         "Repairs: {repairs} made while reading the area boundaries; {notes} on the areas (stipple inspect lists them).",
	MethodsRepairsCountOne:        "1 repair",
	MethodsRepairsCount:           "{n} repairs",
	MethodsNotesCountOne:          "1 geometry note",
	MethodsNotesCount:             "{n} geometry notes",
	MethodsRepairClosedRings:      "rings closed {n}",
	MethodsRepairDroppedPoints:    "repeated points dropped {n}",
	MethodsRepairDroppedRings:     "rings without area dropped {n}",
	MethodsRepairSelfIntersecting: "self-intersecting rings filled even-odd {n}",
	MethodsRepairAntimeridian:     "rings unwrapped at 180° {n}",
	MethodsRepairPolarRings:       "rings closed along a pole {n}",
	MethodsRepairEmptyFeatures:    "areas without a polygon {n}",
	MethodsMeasures:               "Mixing measures (Theil & Finizza 1971; Reardon & Firebaugh 2002; per-area figures in {file}):",
	MethodsTheilH:                 "Theil's H = {h}: how unevenly the groups are spread over the areas, from 0 (every area has the whole map's mix) to 1 (each area holds one group only).",
	MethodsMutualInformation:      "Mutual information M = {m}: H times the entropy of the whole map's mix of groups, in natural units.",
	MethodsInterval:               "The counts are survey estimates: over {draws} draws of the counts within their margins of error (seed {seed}), {level} of the values of H lie between {low} and {high}.",
	MethodsEvenness:               "These measure evenness; exposure, concentration, centralization and clustering are other sides of segregation (Massey & Denton 1988).",
	MethodsCaution:                "Caution: {caution}",
	MethodsMadeWith:               "Made with stipple {version}.",
}

// Placeholders lists, for each Text key (its TOML name) that has them,
// the placeholders its text must hold. (viewer_map_label and
// viewer_still_alt may leave out their {title}.)
var Placeholders = map[string][]string{
	"dot_note":          {"{n}"},
	"not_drawn":         {"{people}", "{dots}"},
	"beyond_limit":      {"{people}"},
	"rows_without_area": {"{people}"},
	"scale":             {"{denominator}", "{latitude}"},
	"viewer_share":      {"{share}"},

	"latitude_north": {"{degrees}"},
	"latitude_south": {"{degrees}"},
	"longitude_east": {"{degrees}"},
	"longitude_west": {"{degrees}"},

	"projection_albers":      {"{parallel1}", "{parallel2}"},
	"projection_albers_one":  {"{parallel}"},
	"projection_laea":        {"{latitude}", "{longitude}"},
	"projection_equal_earth": {"{longitude}"},
	"print_subtitle":         {"{people}", "{areas}"},
	"print_subtitle_frame":   {"{people}"},
	"print_frame_people":     {"{dots}", "{box}", "{n}"},
	"print_rule":             {"{rule}"},
	"print_not_drawn":        {"{people}"},

	"alt_viewer":             {"{n}"},
	"alt_map_number":         {"{n}"},
	"alt_map_number_named":   {"{n}", "{name}"},
	"alt_title":              {"{title}"},
	"alt_dots":               {"{n}"},
	"alt_one_group":          {"{label}", "{people}"},
	"alt_groups":             {"{n}", "{people}"},
	"alt_group":              {"{label}", "{people}", "{share}"},
	"alt_not_drawn":          {"{people}"},
	"alt_beyond_limit":       {"{people}"},
	"alt_theil_h":            {"{h}"},
	"alt_mutual_information": {"{m}"},
	"alt_interval":           {"{draws}", "{level}", "{low}", "{high}"},
	"alt_covers":             {"{west}", "{east}", "{south}", "{north}"},

	"methods_title":                    {"{title}"},
	"methods_totals":                   {"{dot_note}", "{people}", "{groups}", "{dots}"},
	"methods_groups":                   {"{n}"},
	"methods_placement":                {"{seed}"},
	"methods_rounding":                 {"{rule}"},
	"methods_not_drawn_in":             {"{people}", "{areas}", "{reason}"},
	"methods_not_drawn_row":            {"{people}", "{reason}"},
	"methods_areas":                    {"{n}"},
	"methods_repairs":                  {"{repairs}", "{kinds}", "{notes}"},
	"methods_repairs_no_kinds":         {"{repairs}", "{notes}"},
	"methods_repairs_count":            {"{n}"},
	"methods_notes_count":              {"{n}"},
	"methods_repair_closed_rings":      {"{n}"},
	"methods_repair_dropped_points":    {"{n}"},
	"methods_repair_dropped_rings":     {"{n}"},
	"methods_repair_self_intersecting": {"{n}"},
	"methods_repair_antimeridian":      {"{n}"},
	"methods_repair_polar_rings":       {"{n}"},
	"methods_repair_empty_features":    {"{n}"},
	"methods_measures":                 {"{file}"},
	"methods_theil_h":                  {"{h}"},
	"methods_mutual_information":       {"{m}"},
	"methods_interval":                 {"{draws}", "{seed}", "{level}", "{low}", "{high}"},
	"methods_caution":                  {"{caution}"},
	"methods_made_with":                {"{version}"},
}
