package export

// Helpers of the browser tests, for the external test package, whose
// end-to-end run imports the root package (which imports export).
var (
	Tool            = tool
	ChromiumContext = chromiumContext
	OpenExplorer    = openExplorer
	ShowReport      = showReport
	PictureProblems = pictureProblems
	ListedSites     = listedSites
	GeojsonSites    = geojsonSites
)
