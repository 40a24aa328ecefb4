package handlers

// The general information of the OpenAPI description, read by swag.
//
//	@title						Thermal-movement calculation service
//	@version					1.0
//	@description				Thermal movement of structures and equipment: linear, area and volume expansion, differential movement between bonded materials, restrained members and buckling, movement joints and their setting tables, bridge design temperatures. Every dimensional input carries its unit ("30 m", "12e-6/K", {"value": 30, "unit": "m"}); fields named t_* are absolute temperatures, fields named delta_t* temperature differences. Every answer carries its method, references, warnings and cautions. Errors are RFC 9457 problem+json naming every bad parameter. Every GET route but /docs answers HEAD as well, with the GET's status and headers and no body (RFC 9110 9.3.2). Results are preliminary engineering calculations: design temperatures, coefficients and capacities must come from the governing local codes and the project's specifications, and a licensed engineer checks the design before anything is built.
//	@BasePath					/
//	@securityDefinitions.apikey	bearer
//	@in							header
//	@name						Authorization
//	@description				Only where the deployment sets API keys: "Bearer <key>", or the api_key query parameter for spreadsheet cells that cannot send headers.
const apiInfo = ""
