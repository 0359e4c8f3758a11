// Package landxml reads survey observations and control points from
// LandXML 1.2 files, the open exchange standard (www.landxml.org schema
// LandXML-1.2), for the same pipeline as the observation CSV: each reader
// is an io.Reader of the CSV that io/obsfile reads, streamed from
// encoding/xml's token reader, so a file of millions of observations
// takes the memory of a few of them.
//
// What is read, by the schema's element and attribute names:
//
//   - LandXML (version 1.2 or the LandXML-1.2 namespace);
//   - Units: Metric or Imperial with linearUnit and angularUnit, which
//     must agree with the job's length and angle units (never guessed:
//     missing or different is an error that says so);
//   - CgPoints/CgPoint: name and the text "northing easting [elevation]"
//     in the job CRS's grid (Points);
//   - Survey: Equipment/InstrumentDetails (id, serialNumber, which picks
//     the job's profile by its serial_number: Options.Instruments),
//     InstrumentSetup (id, stationName, instrumentHeight,
//     instrumentDetailsID, its InstrumentPoint pntRef), TargetSetup (id,
//     targetHeight),
//     ObservationGroup (setupID) and RawObservation (setupID,
//     targetSetupID, slopeDistance, zenithAngle, or horizDistance and
//     vertDistance where it has no slopeDistance, targetHeight, name,
//     timeStamp as observed_at, directFace, its TargetPoint pntRef)
//     (Observations). A zenith angle with directFace false was read on
//     the reverse face and is written as its face-left equivalent.
//
// Every other element, among it the instrument details' corrections,
// the backsights and reduced observations, is skipped and named in one
// warning per file, and every other attribute of the elements read in a
// second (but id, name and desc): what the instrument applied (ppm, prism
// constant) is said by the job's instrument profile, as for CSV. The
// corrections and the instrument details' other attributes are not read
// because their names could not be checked against the printed schema,
// and a precision taken for a correction would change every distance
// silently. Meteorology is not
// read either (the 1.2 schema, as recalled, has no per-observation
// temperature, pressure and humidity): the job's default_atmosphere
// applies. Attribute names and enumerations not verified against the
// printed schema say "from memory" where they are used; a value outside
// them is an error, not a guess.
//
// Each row of the CSV stream is placed on the line of its element in the
// XML file (blank lines pad the stream), so the pipeline's file:line is
// the element's. An observation this reader refuses (no distance, no
// target, a setup without station, a bad number) is written as a row that
// the CSV reader rejects, and its own reason, naming the element's line
// and column, the attribute, the value and what was expected, is kept for
// the caller to put in its place (Observations.Take): nothing is
// dropped, and read = reduced + rejected holds as for CSV.
package landxml
