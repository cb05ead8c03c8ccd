package ingest

import (
	"strings"
	"sync"
)

var decPool = sync.Pool{New: func() any { return new(jdec) }}

// ParseStudy decodes one API v2 study object: a single-study file, one
// bulk-zip entry, one JSON line or one element of a search page. Unknown
// keys are ignored; results numbers, posted as strings, become Num values
// keeping their text. The returned Trial does not share memory with data.
//
// A record that is not a study (a search page, a legacy classic-API file,
// no protocolSection, no valid nctId) or is malformed gives a *ParseError
// whose Line is counted within data and whose Field is the JSON path.
func ParseStudy(data []byte, src Source) (Trial, error) {
	return parseStudy(data, src, true)
}

// parseStudy is ParseStudy; hash false leaves ContentHash empty (for
// measuring the decoder alone).
func parseStudy(data []byte, src Source, hash bool) (Trial, error) {
	if len(data) > MaxRecordBytes {
		return Trial{}, &ParseError{File: src.Path, Position: src.Position,
			Err: errorf(ErrTooLarge, "record of %d bytes, more than %d", len(data), MaxRecordBytes)}
	}
	d := decPool.Get().(*jdec)
	defer decPool.Put(d)
	d.reset(string(data))
	t := Trial{Registry: RegistryCTGov, Source: src}
	field := d.study(&t)
	if d.err == nil && d.peek() != 0 {
		d.fail(ErrSyntax, "data after the study object")
	}
	if d.err != nil {
		id := t.TrialID
		if id == "" {
			id = sniffNCT(d.s)
		}
		err := &ParseError{File: src.Path, Line: d.line(d.errPos), Position: src.Position,
			Record: id, Field: d.errPath, Err: d.err}
		d.s = ""
		return Trial{}, err
	}
	d.s = ""
	if field != "" {
		return Trial{}, &ParseError{File: src.Path, Line: 1, Position: src.Position, Record: t.TrialID,
			Field: field, Err: errorf(ErrNotStudy, "no protocolSection")}
	}
	if t.TrialID == "" {
		return Trial{}, &ParseError{File: src.Path, Line: 1, Position: src.Position,
			Field: "protocolSection.identificationModule.nctId", Err: ErrMissingID}
	}
	if !validNCT(t.TrialID) {
		return Trial{}, &ParseError{File: src.Path, Line: 1, Position: src.Position, Record: t.TrialID,
			Field: "protocolSection.identificationModule.nctId", Err: errorf(ErrBadValue, "not NCT and 8 digits: %q", t.TrialID)}
	}
	if hash {
		t.ContentHash = ContentHash(data)
	}
	return t, nil
}

func validNCT(s string) bool {
	if len(s) != 11 || !strings.HasPrefix(s, "NCT") {
		return false
	}
	for i := 3; i < 11; i++ {
		if s[i] < '0' || s[i] > '9' {
			return false
		}
	}
	return true
}

// sniffNCT finds an nctId value in raw text, for naming a broken record.
func sniffNCT(s string) string {
	i := strings.Index(s, `"nctId"`)
	if i < 0 {
		return ""
	}
	rest := s[i+7:]
	j := strings.Index(rest, `"NCT`)
	if j < 0 || j > 8 || len(rest) < j+12 {
		return ""
	}
	if id := rest[j+1 : j+12]; validNCT(id) {
		return id
	}
	return ""
}

// study reads the top-level object. It returns a non-empty top-level
// description when the object is not a study.
func (d *jdec) study(t *Trial) (notStudy string) {
	if c := d.peek(); c != '{' {
		if c == 0 {
			d.fail(ErrEmpty, "no JSON value")
		} else {
			d.fail(ErrNotStudy, "expected a study object, got %s", kindName(c))
		}
		return ""
	}
	sawProtocol := false
	d.object("", func(k string) {
		switch k {
		case "protocolSection":
			sawProtocol = true
			d.protocol(t)
		case "resultsSection":
			d.object(k, func(k string) {
				if k == "outcomeMeasuresModule" {
					d.object(k, func(k string) {
						if k == "outcomeMeasures" {
							d.array(k, func(i int) { t.Outcomes = append(t.Outcomes, d.outcome(i)) })
							return
						}
						d.skip()
					})
					return
				}
				d.skip()
			})
		case "derivedSection":
			d.derived(t)
		case "hasResults":
			t.HasResults = d.boolPtr()
		case "FullStudiesResponse", "StudyFieldsResponse", "FullStudies", "Study", "ProtocolSection":
			d.fail(ErrLegacyFormat, "top-level key %q: files of the retired classic API are not read; use API v2 JSON", k)
		case "studies":
			d.fail(ErrNotStudy, "a search page (top-level key \"studies\"), not one study")
		default:
			d.skip()
		}
	})
	if d.err == nil && !sawProtocol {
		return "protocolSection"
	}
	return ""
}

func (d *jdec) date(k string, dt *Date) {
	d.object(k, func(k string) {
		switch k {
		case "date":
			dt.Text = d.str()
		case "type":
			dt.Type = d.str()
		default:
			d.skip()
		}
	})
}

func (d *jdec) org(k, nameKey string, o *Org) {
	d.object(k, func(k string) {
		switch k {
		case nameKey:
			o.Name = d.str()
		case "class":
			o.Class = d.str()
		default:
			d.skip()
		}
	})
}

func (d *jdec) protocol(t *Trial) {
	d.object("protocolSection", func(k string) {
		switch k {
		case "identificationModule":
			d.object(k, func(k string) {
				switch k {
				case "nctId":
					t.TrialID = strings.TrimSpace(d.str())
				case "nctIdAliases":
					t.Aliases = d.strs(k)
				case "orgStudyIdInfo":
					d.object(k, func(k string) {
						if k == "id" {
							t.OrgStudyID = d.str()
							return
						}
						d.skip()
					})
				case "secondaryIdInfos":
					d.array(k, func(int) {
						var s SecondaryID
						d.object("", func(k string) {
							switch k {
							case "id":
								s.ID = d.str()
							case "type":
								s.Type = d.str()
							case "domain":
								s.Domain = d.str()
							case "link":
								s.Link = d.str()
							default:
								d.skip()
							}
						})
						t.SecondaryIDs = append(t.SecondaryIDs, s)
					})
				case "organization":
					d.org(k, "fullName", &t.Organization)
				case "briefTitle":
					t.BriefTitle = d.str()
				case "officialTitle":
					t.OfficialTitle = d.str()
				case "acronym":
					t.Acronym = d.str()
				default:
					d.skip()
				}
			})
		case "statusModule":
			d.object(k, func(k string) {
				switch k {
				case "overallStatus":
					t.OverallStatus = d.str()
				case "lastKnownStatus":
					t.LastKnownStatus = d.str()
				case "whyStopped":
					t.WhyStopped = d.str()
				case "statusVerifiedDate":
					t.StatusVerified = d.str()
				case "startDateStruct":
					d.date(k, &t.StartDate)
				case "primaryCompletionDateStruct":
					d.date(k, &t.PrimaryCompletionDate)
				case "completionDateStruct":
					d.date(k, &t.CompletionDate)
				case "studyFirstPostDateStruct":
					d.date(k, &t.FirstPostedDate)
				case "resultsFirstPostDateStruct":
					d.date(k, &t.ResultsFirstPosted)
				case "lastUpdatePostDateStruct":
					d.date(k, &t.LastUpdatePosted)
				default:
					d.skip()
				}
			})
		case "sponsorCollaboratorsModule":
			d.object(k, func(k string) {
				switch k {
				case "leadSponsor":
					d.org(k, "name", &t.LeadSponsor)
				case "collaborators":
					d.array(k, func(int) {
						var o Org
						d.org("", "name", &o)
						t.Collaborators = append(t.Collaborators, o)
					})
				default:
					d.skip()
				}
			})
		case "conditionsModule":
			d.object(k, func(k string) {
				switch k {
				case "conditions":
					t.Conditions = d.strs(k)
				case "keywords":
					t.Keywords = d.strs(k)
				default:
					d.skip()
				}
			})
		case "designModule":
			d.design(t)
		case "armsInterventionsModule":
			d.arms(t)
		case "outcomesModule":
			d.object(k, func(k string) {
				kind := ""
				switch k {
				case "primaryOutcomes":
					kind = "PRIMARY"
				case "secondaryOutcomes":
					kind = "SECONDARY"
				case "otherOutcomes":
					kind = "OTHER"
				default:
					d.skip()
					return
				}
				d.array(k, func(int) {
					o := RegisteredOutcome{Kind: kind}
					d.object("", func(k string) {
						switch k {
						case "measure":
							o.Measure = d.str()
						case "description":
							o.Description = d.str()
						case "timeFrame":
							o.TimeFrame = d.str()
						default:
							d.skip()
						}
					})
					t.RegisteredOutcomes = append(t.RegisteredOutcomes, o)
				})
			})
		case "referencesModule":
			d.object(k, func(k string) {
				if k != "references" {
					d.skip()
					return
				}
				d.array(k, func(int) {
					var r Reference
					d.object("", func(k string) {
						switch k {
						case "pmid":
							r.PMID = d.str()
						case "type":
							r.Type = d.str()
						case "citation":
							r.Citation = d.str()
						default:
							d.skip()
						}
					})
					t.References = append(t.References, r)
				})
			})
		default:
			d.skip()
		}
	})
}

func (d *jdec) design(t *Trial) {
	d.object("designModule", func(k string) {
		switch k {
		case "studyType":
			t.StudyType = d.str()
		case "phases":
			t.Phases = d.strs(k)
		case "designInfo":
			d.object(k, func(k string) {
				switch k {
				case "allocation":
					t.Allocation = d.str()
				case "interventionModel":
					t.InterventionModel = d.str()
				case "primaryPurpose":
					t.PrimaryPurpose = d.str()
				case "maskingInfo":
					d.object(k, func(k string) {
						if k == "masking" {
							t.Masking = d.str()
							return
						}
						d.skip()
					})
				default:
					d.skip()
				}
			})
		case "enrollmentInfo":
			d.object(k, func(k string) {
				switch k {
				case "count":
					t.Enrollment = d.intPtr()
				case "type":
					t.EnrollmentType = d.str()
				default:
					d.skip()
				}
			})
		default:
			d.skip()
		}
	})
}

func (d *jdec) arms(t *Trial) {
	d.object("armsInterventionsModule", func(k string) {
		switch k {
		case "armGroups":
			d.array(k, func(int) {
				var a Arm
				d.object("", func(k string) {
					switch k {
					case "label":
						a.Label = d.str()
					case "type":
						a.Type = d.str()
					case "description":
						a.Description = d.str()
					case "interventionNames":
						a.InterventionNames = d.strs(k)
					default:
						d.skip()
					}
				})
				t.Arms = append(t.Arms, a)
			})
		case "interventions":
			d.array(k, func(int) {
				var iv Intervention
				d.object("", func(k string) {
					switch k {
					case "type":
						iv.Type = d.str()
					case "name":
						iv.Name = d.str()
					case "description":
						iv.Description = d.str()
					case "armGroupLabels":
						iv.ArmGroupLabels = d.strs(k)
					case "otherNames":
						iv.OtherNames = d.strs(k)
					default:
						d.skip()
					}
				})
				t.Interventions = append(t.Interventions, iv)
			})
		default:
			d.skip()
		}
	})
}

func (d *jdec) derived(t *Trial) {
	meshes := func(k string, dst *[]string) {
		d.object(k, func(k string) {
			if k != "meshes" {
				d.skip()
				return
			}
			d.array(k, func(int) {
				d.object("", func(k string) {
					if k == "term" {
						*dst = append(*dst, d.str())
						return
					}
					d.skip()
				})
			})
		})
	}
	d.object("derivedSection", func(k string) {
		switch k {
		case "miscInfoModule":
			d.object(k, func(k string) {
				if k == "versionHolder" {
					t.VersionHolder = d.str()
					return
				}
				d.skip()
			})
		case "conditionBrowseModule":
			meshes(k, &t.ConditionTerms)
		case "interventionBrowseModule":
			meshes(k, &t.InterventionTerms)
		default:
			d.skip()
		}
	})
}

func (d *jdec) denoms(k string) []Denom {
	var out []Denom
	d.array(k, func(int) {
		var dn Denom
		d.object("", func(k string) {
			switch k {
			case "units":
				dn.Units = d.str()
			case "counts":
				d.array(k, func(int) {
					var c Count
					d.object("", func(k string) {
						switch k {
						case "groupId":
							c.GroupID = d.str()
						case "value":
							c.Value = d.num()
						default:
							d.skip()
						}
					})
					dn.Counts = append(dn.Counts, c)
				})
			default:
				d.skip()
			}
		})
		out = append(out, dn)
	})
	return out
}

func (d *jdec) outcome(i int) Outcome {
	o := Outcome{Index: i}
	d.object("", func(k string) {
		switch k {
		case "type":
			o.Type = d.str()
		case "title":
			o.Title = d.str()
		case "description":
			o.Description = d.str()
		case "populationDescription":
			o.Population = d.str()
		case "timeFrame":
			o.TimeFrame = d.str()
		case "reportingStatus":
			o.ReportingStatus = d.str()
		case "anticipatedPostingDate":
			o.AnticipatedPost = d.str()
		case "paramType":
			o.ParamType = d.str()
		case "dispersionType":
			o.DispersionText = d.str()
			o.Dispersion = NormalizeDispersion(o.DispersionText)
		case "unitOfMeasure":
			o.Unit = d.str()
		case "calculatePct":
			o.CalculatePct = d.boolPtr()
		case "typeUnitsAnalyzed":
			o.UnitsAnalyzed = d.str()
		case "denomUnitsSelected":
			o.DenomUnits = d.str()
		case "groups":
			d.array(k, func(int) {
				var g Group
				d.object("", func(k string) {
					switch k {
					case "id":
						g.ID = d.str()
					case "title":
						g.Title = d.str()
					case "description":
						g.Description = d.str()
					default:
						d.skip()
					}
				})
				o.Groups = append(o.Groups, g)
			})
		case "denoms":
			o.Denoms = d.denoms(k)
		case "classes":
			d.array(k, func(int) { o.Classes = append(o.Classes, d.class()) })
		case "analyses":
			d.array(k, func(int) { o.Analyses = append(o.Analyses, d.analysis()) })
		default:
			d.skip()
		}
	})
	return o
}

func (d *jdec) class() Class {
	var c Class
	d.object("", func(k string) {
		switch k {
		case "title":
			c.Title = d.str()
		case "denoms":
			c.Denoms = d.denoms(k)
		case "categories":
			d.array(k, func(int) {
				var cat Category
				d.object("", func(k string) {
					switch k {
					case "title":
						cat.Title = d.str()
					case "measurements":
						d.array(k, func(int) {
							var m Measurement
							d.object("", func(k string) {
								switch k {
								case "groupId":
									m.GroupID = d.str()
								case "value":
									m.Value = d.num()
								case "spread":
									m.Spread = d.num()
								case "lowerLimit":
									m.Lower = d.num()
								case "upperLimit":
									m.Upper = d.num()
								case "comment":
									m.Comment = d.str()
								default:
									d.skip()
								}
							})
							cat.Measurements = append(cat.Measurements, m)
						})
					default:
						d.skip()
					}
				})
				c.Categories = append(c.Categories, cat)
			})
		default:
			d.skip()
		}
	})
	return c
}

func (d *jdec) analysis() Analysis {
	var a Analysis
	d.object("", func(k string) {
		switch k {
		case "groupIds":
			a.GroupIDs = d.strs(k)
		case "groupDescription":
			a.GroupDescription = d.str()
		case "paramType":
			a.ParamType = d.str()
		case "paramValue":
			a.ParamValue = d.num()
		case "dispersionType":
			a.DispersionType = d.str()
		case "dispersionValue":
			a.DispersionValue = d.num()
		case "ciPctValue":
			a.CIPct = d.num()
		case "ciNumSides":
			a.CISides = d.str()
		case "ciLowerLimit":
			a.CILower = d.num()
		case "ciUpperLimit":
			a.CIUpper = d.num()
		case "ciLowerLimitComment":
			a.CILowerComment = d.str()
		case "ciUpperLimitComment":
			a.CIUpperComment = d.str()
		case "pValue":
			a.PValue = ParsePValue(d.str())
		case "pValueComment":
			a.PValueComment = d.str()
		case "statisticalMethod":
			a.Method = d.str()
		case "statisticalComment":
			a.StatisticalComment = d.str()
		case "estimateComment":
			a.EstimateComment = d.str()
		case "nonInferiorityType":
			a.NonInferiorityType = d.str()
		case "testedNonInferiority":
			a.TestedNonInferiority = d.boolPtr()
		case "nonInferiorityComment":
			a.NonInferiorityComment = d.str()
		case "otherAnalysisDescription":
			a.OtherDescription = d.str()
		default:
			d.skip()
		}
	})
	return a
}
